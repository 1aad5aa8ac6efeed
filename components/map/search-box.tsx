'use client';

import { useId, useMemo, useState } from 'react';
import type { EntityData } from './types';

const SUGGESTIONS = 8;

/** Finds an entity by id or label (prefix matches first, then substrings) and flies the map to it. */
export function SearchBox({ entities, onPick }: { entities: EntityData | undefined; onPick: (index: number) => void }) {
  const [text, setText] = useState('');
  const [open, setOpen] = useState(false);
  const [active, setActive] = useState(0);
  const listId = useId();
  const matches = useMemo(() => {
    const q = text.trim().toLowerCase();
    if (!entities || q.length === 0) return [];
    const prefix: number[] = [];
    const inner: number[] = [];
    for (let i = 0; i < entities.count && prefix.length < SUGGESTIONS; i += 1) {
      const id = (entities.ids[i] ?? '').toLowerCase();
      const label = (entities.labels?.[i] ?? '').toLowerCase();
      if (id.startsWith(q) || label.startsWith(q)) prefix.push(i);
      else if (inner.length < SUGGESTIONS && (id.includes(q) || label.includes(q))) inner.push(i);
    }
    return [...prefix, ...inner].slice(0, SUGGESTIONS);
  }, [entities, text]);

  const pick = (index: number) => {
    onPick(index);
    setText(entities?.labels?.[index] ?? entities?.ids[index] ?? '');
    setOpen(false);
  };

  return (
    <div className="relative flex flex-col gap-1">
      <label htmlFor={`${listId}-input`} className="text-xs text-ink-muted">
        Find an entity
      </label>
      <input
        id={`${listId}-input`}
        role="combobox"
        aria-expanded={open && matches.length > 0}
        aria-controls={listId}
        aria-autocomplete="list"
        className="w-56 border border-rule bg-paper-raised px-2 py-1.5"
        placeholder="id or label"
        value={text}
        onChange={(e) => {
          setText(e.target.value);
          setOpen(true);
          setActive(0);
        }}
        onKeyDown={(e) => {
          if (e.key === 'ArrowDown') setActive((a) => Math.min(a + 1, matches.length - 1));
          else if (e.key === 'ArrowUp') setActive((a) => Math.max(a - 1, 0));
          else if (e.key === 'Enter' && matches[active] !== undefined) {
            e.preventDefault();
            pick(matches[active]);
          } else if (e.key === 'Escape') setOpen(false);
        }}
        onBlur={() => window.setTimeout(() => setOpen(false), 150)}
      />
      {open && matches.length > 0 && (
        <ul id={listId} role="listbox" className="absolute top-full z-20 mt-1 w-72 border border-rule bg-paper-raised text-sm shadow-sm">
          {matches.map((index, k) => (
            <li
              key={index}
              role="option"
              aria-selected={k === active}
              className={`cursor-pointer px-2 py-1 ${k === active ? 'bg-accent-wash' : ''}`}
              onMouseDown={(e) => {
                e.preventDefault();
                pick(index);
              }}
            >
              {entities?.labels?.[index] ?? entities?.ids[index]}
              {entities?.labels?.[index] && <span className="ml-2 text-xs text-ink-muted">{entities.ids[index]}</span>}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
