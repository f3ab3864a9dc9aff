// The page's exports, dispatched by format in one place: both shells hand them out through the
// handler table, and the command writes its --json, --graphml, --csv and --dot files with them.
import { cardCoverageMapSvg } from '../core/sequence/card-coverage-map.js';
import { reportToCsv } from '../core/exports/csv.js';
import { reportToDot } from '../core/exports/dot.js';
import { reportToGraphml } from '../core/exports/graphml.js';
import type { Report } from '../core/sequence/report.js';
import type { ExportFormat } from '../common/api.js';
import { NoCoverageMap, noCoverageMapText } from './coverage-map-file.js';

/** Text of an export of a report, and the file name to suggest for it. */
export function exportContent(report: Report, format: ExportFormat): { text: string; name: string } {
  switch (format) {
    case 'json':
      return { text: JSON.stringify(report, null, 2) + '\n', name: 'seamscout-report.json' };
    case 'graphml':
      return { text: reportToGraphml(report), name: 'seamscout-pairs.graphml' };
    case 'csv':
      return { text: reportToCsv(report), name: 'seamscout-pairs.csv' };
    case 'dot':
      return { text: reportToDot(report), name: 'seamscout-pairs.dot' };
    case 'coverage': {
      const svg = cardCoverageMapSvg(report);
      if (svg === null) throw new NoCoverageMap(noCoverageMapText);
      return { text: svg, name: 'seamscout-coverage.svg' };
    }
  }
}
