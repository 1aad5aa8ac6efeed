/**
 * The one place that says what each workspace role may do (PRODUCT.md, "Who uses it").
 * Every route handler and server action asks `can(role, action)`; the interface asks it too,
 * only to hide controls — the server check is the one that counts.
 */
export const ROLES = ['owner', 'analyst', 'expert', 'presenter', 'reviewer', 'viewer'] as const;
export type Role = (typeof ROLES)[number];

export const ACTIONS = [
  'workspace.view',
  'workspace.rename',
  'workspace.delete',
  'members.view',
  'members.manage',
  'invitations.manage',
  'factor-sets.import',
  'factor-sets.fit',
  'factor-sets.delete',
  'projections.run',
  'projections.delete',
  'annotations.edit',
  'threads.participate',
  'views.save',
  'exports.create',
  'share-links.manage',
] as const;
export type Action = (typeof ACTIONS)[number];

const VIEWER: readonly Action[] = ['workspace.view', 'members.view'];
const REVIEWER: readonly Action[] = [...VIEWER, 'threads.participate'];
const EXPERT: readonly Action[] = [...REVIEWER, 'annotations.edit'];
const ANALYST: readonly Action[] = [
  ...EXPERT,
  'factor-sets.import',
  'factor-sets.fit',
  'factor-sets.delete',
  'projections.run',
  'projections.delete',
];
const PRESENTER: readonly Action[] = [...VIEWER, 'views.save', 'exports.create', 'share-links.manage'];

const ALLOWED: Record<Role, ReadonlySet<Action>> = {
  owner: new Set(ACTIONS),
  analyst: new Set(ANALYST),
  expert: new Set(EXPERT),
  presenter: new Set(PRESENTER),
  reviewer: new Set(REVIEWER),
  viewer: new Set(VIEWER),
};

export function can(role: Role, action: Action): boolean {
  return ALLOWED[role].has(action);
}

export function isRole(value: string): value is Role {
  return (ROLES as readonly string[]).includes(value);
}

export const ROLE_SUMMARIES: Record<Role, string> = {
  owner: 'Everything, plus members, roles, invitations and deleting the workspace',
  analyst: 'Imports and fits factor sets, runs and deletes projections, and edits annotations',
  expert: 'Creates and edits annotations (named clusters), and takes part in threads',
  presenter: 'Saves views, exports figures and data, and manages share links',
  reviewer: 'Opens, replies to and resolves comment threads',
  viewer: 'Views the workspace',
};
