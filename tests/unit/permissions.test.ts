import { describe, expect, it } from 'vitest';
import { ACTIONS, type Action, can, ROLES, type Role } from '@/lib/permissions';

/**
 * The roles table of PRODUCT.md ("Who uses it"), written out action by action:
 * owner: everything; analyst: import and fit factor sets, run and delete projections, everything an
 * expert may; expert: annotations, everything a reviewer may; presenter: views, exports, share links,
 * view; reviewer: threads, view; viewer: view. Members, roles, invitations, rename and delete: owner.
 */
const EXPECTED: Record<Role, readonly Action[]> = {
  owner: ACTIONS,
  analyst: [
    'workspace.view',
    'members.view',
    'threads.participate',
    'annotations.edit',
    'factor-sets.import',
    'factor-sets.fit',
    'factor-sets.delete',
    'projections.run',
    'projections.delete',
  ],
  expert: ['workspace.view', 'members.view', 'threads.participate', 'annotations.edit'],
  presenter: ['workspace.view', 'members.view', 'views.save', 'exports.create', 'share-links.manage'],
  reviewer: ['workspace.view', 'members.view', 'threads.participate'],
  viewer: ['workspace.view', 'members.view'],
};

describe('role → action table', () => {
  for (const role of ROLES) {
    for (const action of ACTIONS) {
      const allowed = EXPECTED[role].includes(action);
      it(`${role} ${allowed ? 'may' : 'may not'} ${action}`, () => {
        expect(can(role, action)).toBe(allowed);
      });
    }
  }

  it('only owners manage members, invitations and the workspace itself', () => {
    const ownerOnly: Action[] = ['members.manage', 'invitations.manage', 'workspace.rename', 'workspace.delete'];
    for (const action of ownerOnly) {
      expect(ROLES.filter((r) => can(r, action))).toEqual(['owner']);
    }
  });

  it('every role may view', () => {
    expect(ROLES.every((r) => can(r, 'workspace.view'))).toBe(true);
  });
});
