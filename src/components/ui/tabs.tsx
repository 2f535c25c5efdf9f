/**
 * Tabs as the WAI-ARIA Authoring Practices describe them: one tab in the tab
 * order, the arrow keys move between tabs and select them (Home and End go
 * to the ends), and each tab names the panel it controls.
 */
import { useId, useRef, type KeyboardEvent, type ReactNode } from 'react';

export interface TabItem<K extends string> {
  key: K;
  label: ReactNode;
  /** The tab's accessible name when the label is not plain text. */
  name?: string;
}

/** The tab a key press moves to, or null for keys the tab list does not use. */
export function nextTabIndex(key: string, index: number, count: number, orientation: 'horizontal' | 'vertical' = 'horizontal'): number | null {
  if (count === 0) return null;
  const back = orientation === 'horizontal' ? 'ArrowLeft' : 'ArrowUp';
  const forward = orientation === 'horizontal' ? 'ArrowRight' : 'ArrowDown';
  switch (key) {
    case back:
      return (index - 1 + count) % count;
    case forward:
      return (index + 1) % count;
    case 'Home':
      return 0;
    case 'End':
      return count - 1;
    default:
      return null;
  }
}

export function TabList<K extends string>({
  label,
  items,
  selected,
  onSelect,
  idPrefix,
  className = '',
  tabClassName,
}: {
  label: string;
  items: readonly TabItem<K>[];
  selected: K;
  onSelect: (key: K) => void;
  /** Ids are `${idPrefix}-tab-${key}` and `${idPrefix}-panel-${key}`. */
  idPrefix: string;
  className?: string;
  tabClassName: (selected: boolean) => string;
}) {
  const refs = useRef(new Map<K, HTMLButtonElement>());
  const onKeyDown = (e: KeyboardEvent<HTMLButtonElement>, index: number) => {
    const next = nextTabIndex(e.key, index, items.length);
    if (next === null) return;
    e.preventDefault();
    const item = items[next]!;
    onSelect(item.key);
    refs.current.get(item.key)?.focus();
  };
  return (
    <div role="tablist" aria-label={label} className={className}>
      {items.map((t, i) => (
        <button
          key={t.key}
          ref={(el) => {
            if (el) refs.current.set(t.key, el);
            else refs.current.delete(t.key);
          }}
          type="button"
          role="tab"
          id={`${idPrefix}-tab-${t.key}`}
          aria-selected={t.key === selected}
          aria-controls={`${idPrefix}-panel-${t.key}`}
          aria-label={t.name}
          tabIndex={t.key === selected ? 0 : -1}
          onClick={() => onSelect(t.key)}
          onKeyDown={(e) => onKeyDown(e, i)}
          className={tabClassName(t.key === selected)}
        >
          {t.label}
        </button>
      ))}
    </div>
  );
}

/** One tab's panel; the others stay mounted but hidden, so what was typed in them is kept. */
export function TabPanel({ idPrefix, tabKey, selected, className = '', children }: { idPrefix: string; tabKey: string; selected: string; className?: string; children: ReactNode }) {
  return (
    <div role="tabpanel" id={`${idPrefix}-panel-${tabKey}`} aria-labelledby={`${idPrefix}-tab-${tabKey}`} tabIndex={0} hidden={tabKey !== selected} className={className}>
      {children}
    </div>
  );
}

/** A stable id prefix for one set of tabs. */
export function useTabsId(name: string): string {
  return `${name}-${useId().replace(/:/g, '')}`;
}
