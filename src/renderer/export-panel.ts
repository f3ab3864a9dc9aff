// Export buttons: the report, its pair graph and the coverage map, as the check command writes them.
import type { ExportFormat } from '../common/api.js';
import { button, el } from './dom.js';

export const exportButtons: readonly { format: ExportFormat; label: string }[] = [
  { format: 'json', label: 'Export report (JSON)' },
  { format: 'graphml', label: 'Export pair graph (GraphML)' },
  { format: 'csv', label: 'Export pairs (CSV)' },
  { format: 'dot', label: 'Export graph (DOT)' },
  { format: 'coverage', label: 'Export coverage map (SVG)' },
];

export type ExportResult = { readonly state: 'idle' } | { readonly state: 'busy'; readonly format: ExportFormat } | { readonly state: 'written'; readonly path: string; readonly shell: 'desktop' | 'browser' } | { readonly state: 'cancelled' } | { readonly state: 'failed'; readonly message: string };

export function exportResultText(r: ExportResult): string {
  switch (r.state) {
    case 'idle': return '';
    case 'busy': return 'Writing…';
    // The desktop window knows the full path the save dialog chose; a browser never tells a page
    // where its downloads go, so the page names the file and where to look.
    case 'written': return r.shell === 'desktop' ? `Saved to ${r.path}` : `Downloaded as ${r.path}: look in your browser's downloads folder.`;
    case 'cancelled': return 'Export cancelled.';
    case 'failed': return `Export failed: ${r.message}`;
  }
}

export function renderExport(result: ExportResult, onExport: (format: ExportFormat) => void): HTMLElement {
  const busy = result.state === 'busy';
  return el(
    'section',
    { class: 'export', 'aria-label': 'Export' },
    el('h2', {}, 'Export'),
    el('div', { class: 'export-buttons' }, exportButtons.map((b) => button({ 'data-export': b.format, disabled: busy }, () => onExport(b.format), b.label))),
    el('p', { class: `export-result export-${result.state}`, 'data-export-result': result.state, role: 'status' }, exportResultText(result)),
  );
}
