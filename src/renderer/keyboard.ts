// Keys on the results: arrows move between the strip's pairs (or the card's sequences), Enter opens,
// Escape goes back one level. Keys typed into a field stay there; Escape leaves the field.

export interface KeyTargets {
  /** What the results show now: the card's list, a strip, or null when no results are on screen. */
  showing(): 'list' | 'strip' | null;
  readonly list: {
    selected(): number | null;
    move(step: 1 | -1): void;
    open(index: number): void;
  };
  readonly strip: {
    selected(): string | null;
    detailOpen(): boolean;
    move(step: 1 | -1): void;
    open(key: string): void;
    closeDetail(): void;
    /** A sequence of a card is open: Escape goes back to the card's list. */
    inCard(): boolean;
    backToList(): void;
  };
  goStart(): void;
}

const arrows = new Set(['ArrowDown', 'ArrowRight', 'ArrowUp', 'ArrowLeft']);

/** Listens on the document; returns the function that stops listening. */
export function listenForKeys(doc: Document, t: KeyTargets): () => void {
  const onKey = (e: KeyboardEvent): void => {
    const showing = e.defaultPrevented || e.altKey || e.ctrlKey || e.metaKey ? null : t.showing();
    if (!showing) return;
    const target = e.target instanceof Element ? e.target : null;
    const typing = !!target && (/^(INPUT|TEXTAREA|SELECT)$/.test(target.tagName) || (target as HTMLElement).isContentEditable === true);
    if (typing) {
      if (e.key === 'Escape') (target as HTMLElement).blur();
      return;
    }
    if (showing === 'list') {
      if (arrows.has(e.key)) {
        e.preventDefault();
        t.list.move(e.key === 'ArrowDown' || e.key === 'ArrowRight' ? 1 : -1);
      } else if (e.key === 'Enter') {
        const onEntry = target?.closest('[data-sequence]')?.getAttribute('data-sequence') ?? null;
        if (!onEntry && target?.closest('button, a, summary')) return;
        const index = onEntry !== null ? Number(onEntry) : t.list.selected();
        if (index !== null) {
          e.preventDefault();
          t.list.open(index);
        }
      } else if (e.key === 'Escape') {
        e.preventDefault();
        t.goStart();
      }
      return;
    }
    if (e.key === 'ArrowRight' || e.key === 'ArrowLeft') {
      e.preventDefault();
      t.strip.move(e.key === 'ArrowRight' ? 1 : -1);
    } else if (e.key === 'Enter' && !t.strip.detailOpen()) {
      const onPair = target?.closest('[data-pair]')?.getAttribute('data-pair') ?? null;
      // Other controls (export, budget defaults, "Show pair") act on Enter themselves.
      if (!onPair && target?.closest('button, a, summary')) return;
      const key = onPair ?? t.strip.selected();
      if (key) {
        e.preventDefault();
        t.strip.open(key);
      }
    } else if (e.key === 'Escape') {
      e.preventDefault();
      if (t.strip.detailOpen()) t.strip.closeDetail();
      else if (t.strip.inCard()) t.strip.backToList();
      else t.goStart();
    }
  };
  doc.addEventListener('keydown', onKey);
  return () => doc.removeEventListener('keydown', onKey);
}
