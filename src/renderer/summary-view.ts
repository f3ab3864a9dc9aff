// The summary header: the numbers a photographer reads first, large, and the overall verdict.
import type { Report, Verdict } from '../core/report.js';
import { el } from './dom.js';
import { plural } from './format.js';
import { verdictBadge, verdictIcon } from './icons.js';

const overallWords: Record<Verdict, string> = {
  ok: 'The sequence looks complete.',
  weak: 'Some pairs or frames are weak: look at them before you leave.',
  reshoot: 'Some frames need reshooting.',
};

function stat(name: string, value: string, label: string, icon: SVGSVGElement | null = null): HTMLElement {
  return el('div', { class: `stat stat-${name}`, 'data-stat': name }, el('dt', {}, icon, label), el('dd', { class: 'numeral' }, value));
}

export function renderSummary(report: Report): HTMLElement {
  const c = report.counts;
  const folderName = report.folder.split(/[\\/]/).filter(Boolean).pop() ?? report.folder;
  return el(
    'section',
    { class: `summary summary-${report.verdict}`, 'data-summary': '', 'aria-label': 'Summary' },
    el(
      'div',
      { class: `overall overall-${report.verdict}`, 'data-verdict': report.verdict },
      verdictBadge(report.verdict, 44),
      el('p', { class: 'overall-words' }, overallWords[report.verdict]),
      el('p', { class: 'folder', title: report.folder }, folderName),
    ),
    el(
      'dl',
      { class: 'stats' },
      stat('frames', String(c.frames), 'frames'),
      stat('stations', String(c.stations), 'stations'),
      report.sweepDeg !== null ? stat('sweep', `${Math.round(report.sweepDeg)}°`, 'sweep') : null,
      report.geometry ? stat('vertical', `${Math.round(report.geometry.verticalDeg)}°`, 'vertical') : null,
      report.geometry?.closure ? stat('turn', report.geometry.closure.closes ? 'closes' : 'open', 'full turn') : null,
      stat('weak', String(c.weak), 'weak', verdictIcon('weak', 20)),
      stat('reshoot', String(c.reshoot), 'reshoot', verdictIcon('reshoot', 20)),
    ),
    (report.folderProblems ?? []).length
      ? el('ul', { class: 'folder-problems', 'data-folder-problems': '' }, report.folderProblems.map((p) => el('li', { 'data-folder-problem': p.code }, verdictIcon('weak', 20), ` ${p.advice}`)))
      : null,
    report.skipped.length
      ? el(
          'details',
          { class: 'skipped', 'data-skipped': report.skipped.length },
          el('summary', {}, `${plural(report.skipped.length, 'file')} skipped`),
          el('ul', {}, report.skipped.map((s) => el('li', { 'data-skip': s.code }, el('span', { class: 'frame-name' }, s.file), `: ${s.reason}`))),
        )
      : null,
  );
}
