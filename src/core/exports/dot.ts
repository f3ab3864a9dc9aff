import type { Report, Verdict } from '../report.js';

const quote = (s: string): string => `"${s.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n')}"`;

/** Verdicts as line style and words, never by colour alone (colours: Okabe & Ito 2002). */
const look: Record<Verdict, string> = {
  ok: 'style=solid, color="#0072B2"',
  weak: 'style=dashed, color="#E69F00", penwidth=2',
  reshoot: 'style=bold, color="#D55E00", penwidth=3',
};

/** The pair graph in the DOT language (Graphviz documentation): frames as nodes, pairs as edges. */
export function reportToDot(report: Report): string {
  const out = ['graph sequence {', '  node [shape=box, fontname="Helvetica"];', '  edge [fontname="Helvetica"];'];
  for (const s of report.stations) {
    out.push(`  subgraph ${quote(`cluster_station_${s.index + 1}`)} {`, `    label=${quote(`station ${s.index + 1}`)};`);
    for (const f of s.frames) out.push(`    ${quote(f)};`);
    out.push('  }');
  }
  for (const p of report.pairs) {
    const parts = [p.overlap === null ? 'no match' : `${Math.round(100 * p.overlap)} %`, `${p.inliers} inliers`];
    if (p.evDiff !== null) parts.push(`${p.evDiff >= 0 ? '+' : ''}${p.evDiff.toFixed(1)} EV`);
    parts.push(p.verdict + (p.reasons.length ? `: ${p.reasons.join(', ')}` : ''));
    out.push(`  ${quote(p.a)} -- ${quote(p.b)} [label=${quote(parts.join('\n'))}, ${look[p.verdict]}];`);
  }
  out.push('}', '');
  return out.join('\n');
}
