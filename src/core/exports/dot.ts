import type { Report, ReportPair, ReportStation, Verdict } from '../sequence/report.js';

const quote = (s: string): string => `"${s.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n')}"`;

/** Verdicts as line style and words, never by colour alone (colours: Okabe & Ito 2002). */
const look: Record<Verdict, string> = {
  ok: 'style=solid, color="#0072B2"',
  weak: 'style=dashed, color="#E69F00", penwidth=2',
  reshoot: 'style=bold, color="#D55E00", penwidth=3',
};

/** Stations as clusters of their frames, then pairs as edges, each line indented by `pad`. */
function body(stations: readonly ReportStation[], pairs: readonly ReportPair[], clusterPrefix: string, pad: string): string[] {
  const out: string[] = [];
  for (const s of stations) {
    out.push(`${pad}subgraph ${quote(`${clusterPrefix}station_${s.index + 1}`)} {`, `${pad}  label=${quote(`station ${s.index + 1}`)};`);
    for (const f of s.frames) out.push(`${pad}  ${quote(f)};`);
    out.push(`${pad}}`);
  }
  for (const p of pairs) {
    const parts = [p.overlap === null ? 'no match' : `${Math.round(100 * p.overlap)} %`, `${p.inliers} inliers`];
    if (p.evDiff !== null) parts.push(`${p.evDiff >= 0 ? '+' : ''}${p.evDiff.toFixed(1)} EV`);
    parts.push(p.verdict + (p.reasons.length ? `: ${p.reasons.join(', ')}` : ''));
    out.push(`${pad}${quote(p.a)} -- ${quote(p.b)} [label=${quote(parts.join('\n'))}, ${look[p.verdict]}];`);
  }
  return out;
}

/**
 * The pair graph in the DOT language (Graphviz documentation): frames as nodes, pairs as edges.
 * A DOT file holds one graph, so a card of several sequences is one graph with a cluster per
 * sequence ("cluster_<index>", labelled with its first and last file and its verdict in words; not
 * styled, since clusters inside it would take on its style), its stations as clusters inside it and
 * its pairs as edges inside it. Single shots belong to no sequence and are left out. A report of one
 * sequence, or of none, is drawn as before.
 */
export function reportToDot(report: Report): string {
  const several = report.sequences && report.sequences.length > 1 ? report.sequences : null;
  const out = [several ? 'graph card {' : 'graph sequence {', '  node [shape=box, fontname="Helvetica"];', '  edge [fontname="Helvetica"];'];
  if (!several) out.push(...body(report.stations, report.pairs, 'cluster_', '  '));
  else {
    for (const q of several) {
      const label = `sequence ${q.index} of ${several.length}: ${q.firstFile} to ${q.lastFile}, ${q.verdict}`;
      out.push(`  subgraph ${quote(`cluster_${q.index}`)} {`, `    label=${quote(label)};`);
      out.push(...body(q.stations, q.pairs, `cluster_${q.index}_`, '    '));
      out.push('  }');
    }
  }
  out.push('}', '');
  return out.join('\n');
}
