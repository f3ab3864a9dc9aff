// @vitest-environment happy-dom
// The app's first screen leads with the reshoot plan, built by core's own `judge` on hand-made
// measures (the card of test/helpers/card-analysis.ts and a one-sequence folder of it): what must
// be reshot first, numbered, then what is only worth a look, each item's text as in the report.
import { describe, expect, it } from 'vitest';
import { defaultBudget } from '../../src/core/sequence/report.js';
import { sequenceReport } from '../../src/core/sequence/sequence-report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { renderSummary } from '../../src/renderer/summary-view.js';
import { cardAnalysis } from '../helpers/card-analysis.js';

const card = judge(cardAnalysis, defaultBudget);
const text = (e: Element | null | undefined): string => (e?.textContent ?? '').replace(/\s+/g, ' ').trim();

describe('the reshoot plan on the first screen', () => {
  it('comes right after the overall verdict, must-do items numbered and optional ones apart', () => {
    const s = renderSummary(card);
    const plan = s.querySelector('[data-plan]')!;
    expect(plan).not.toBeNull();
    expect(plan.previousElementSibling?.classList.contains('overall')).toBe(true);
    expect([...plan.querySelectorAll('ol > [data-plan-item]')].map(text)).toEqual(card.plan!.filter((i) => !i.optional).map((i) => i.text));
    expect([...plan.querySelectorAll('ul > [data-plan-item][data-optional]')].map(text)).toEqual(card.plan!.filter((i) => i.optional).map((i) => i.text));
    expect(text(plan.querySelector('h2'))).toBe('Reshoot plan, in shooting order');
  });

  it('shows a sequence its own plan, and nothing for a sequence with nothing to do', () => {
    const first = renderSummary(sequenceReport(card, 1));
    expect([...first.querySelectorAll('[data-plan-item]')].map(text)).toEqual([card.sequences![0].plan![0].text]);
    expect(text(first.querySelector('[data-plan-item]'))).toMatch(/^Between stations 2 and 3/);
    expect(renderSummary(sequenceReport(card, 2)).querySelector('[data-plan]')).toBeNull();
  });

  it('says a folder is weak for files it could not check, not for weak pairs, and leads with copying them again', () => {
    const one = sequenceReport(card, 2);
    const analysis = { ...one, skipped: [{ file: 'IMG_0009.JPG', code: 'unreadable' as const, reason: 'damaged or cut short: copy it from the card again' }] };
    const report = judge({ ...analysis, sequences: undefined, singleShots: undefined }, defaultBudget);
    expect(report.verdict).toBe('weak');
    const s = renderSummary(report);
    expect(text(s.querySelector('.overall-words'))).toBe('Every pair and frame checked is fine, but some files could not be checked: look at them before you leave.');
    expect(text(s.querySelector('[data-plan-item]'))).toMatch(/^IMG_0009: could not be read \(damaged or cut short\)\. Copy it from the card again/);
  });
});
