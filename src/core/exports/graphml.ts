import type { Report, ReportFrame, ReportPair, ReportSequence, ReportStation, SequenceGeometry, Verdict } from '../sequence/report.js';

const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

type KeyType = 'string' | 'int' | 'double' | 'boolean';
interface Key {
  readonly id: string;
  readonly for: 'node' | 'edge' | 'graph';
  readonly name: string;
  readonly type: KeyType;
}

const keys: Key[] = [
  { id: 'g_verdict', for: 'graph', name: 'verdict', type: 'string' },
  { id: 'g_sweep', for: 'graph', name: 'sweepDeg', type: 'double' },
  { id: 'g_vertical', for: 'graph', name: 'verticalDeg', type: 'double' },
  { id: 'g_focal', for: 'graph', name: 'focalPx', type: 'double' },
  { id: 'g_closes', for: 'graph', name: 'turnCloses', type: 'boolean' },
  { id: 'g_focal35', for: 'graph', name: 'focal35mm', type: 'double' },
  { id: 'g_k1', for: 'graph', name: 'distortionK1', type: 'double' },
  { id: 'g_k2', for: 'graph', name: 'distortionK2', type: 'double' },
  { id: 'n_file', for: 'node', name: 'file', type: 'string' },
  { id: 'n_station', for: 'node', name: 'station', type: 'int' },
  { id: 'n_label', for: 'node', name: 'label', type: 'string' },
  { id: 'n_reference', for: 'node', name: 'reference', type: 'boolean' },
  { id: 'n_width', for: 'node', name: 'width', type: 'int' },
  { id: 'n_height', for: 'node', name: 'height', type: 'int' },
  { id: 'n_capture', for: 'node', name: 'captureTime', type: 'string' },
  { id: 'n_verdict', for: 'node', name: 'verdict', type: 'string' },
  { id: 'n_flags', for: 'node', name: 'flags', type: 'string' },
  { id: 'n_yaw', for: 'node', name: 'yawDeg', type: 'double' },
  { id: 'n_pitch', for: 'node', name: 'pitchDeg', type: 'double' },
  { id: 'n_roll', for: 'node', name: 'rollDeg', type: 'double' },
  { id: 'e_kind', for: 'edge', name: 'kind', type: 'string' },
  { id: 'e_verdict', for: 'edge', name: 'verdict', type: 'string' },
  { id: 'e_reasons', for: 'edge', name: 'reasons', type: 'string' },
  { id: 'e_matches', for: 'edge', name: 'matches', type: 'int' },
  { id: 'e_inliers', for: 'edge', name: 'inliers', type: 'int' },
  { id: 'e_in_overlap', for: 'edge', name: 'matchesInOverlap', type: 'int' },
  { id: 'e_overlap', for: 'edge', name: 'overlap', type: 'double' },
  { id: 'e_ev', for: 'edge', name: 'evDiff', type: 'double' },
  { id: 'e_rms', for: 'edge', name: 'rmsError', type: 'double' },
  { id: 'e_shift', for: 'edge', name: 'shiftPx', type: 'double' },
  { id: 'e_h', for: 'edge', name: 'homography', type: 'string' },
  { id: 'e_advice', for: 'edge', name: 'advice', type: 'string' },
  { id: 'e_predicted', for: 'edge', name: 'predictedOverlap', type: 'double' },
  { id: 'e_sharpness', for: 'edge', name: 'sharpnessRatio', type: 'double' },
  { id: 'e_misfit', for: 'edge', name: 'misfit', type: 'double' },
  { id: 'e_parallax', for: 'edge', name: 'parallax', type: 'boolean' },
];

/** Declared only for a card of several sequences, so that a single sequence exports as it always has. */
const sequenceKeys: Key[] = [
  { id: 'g_sequence', for: 'graph', name: 'sequence', type: 'int' },
  { id: 'g_first', for: 'graph', name: 'firstFile', type: 'string' },
  { id: 'g_last', for: 'graph', name: 'lastFile', type: 'string' },
  { id: 'g_start', for: 'graph', name: 'startTime', type: 'string' },
  { id: 'g_end', for: 'graph', name: 'endTime', type: 'string' },
  { id: 'g_split', for: 'graph', name: 'splitBy', type: 'string' },
];

function data(id: string, v: unknown): string {
  if (v === null || v === undefined) return '';
  return `<data key="${id}">${esc(String(v))}</data>`;
}

/** What one graph is drawn from: a whole report, or one sequence of a card. */
interface GraphSource {
  readonly verdict: Verdict;
  readonly sweepDeg: number | null;
  readonly geometry: SequenceGeometry | null;
  readonly frames: readonly ReportFrame[];
  readonly stations: readonly ReportStation[];
  readonly pairs: readonly ReportPair[];
}

/**
 * One `<graph>`. Node and edge ids count from firstNode and firstEdge, because the GraphML primer
 * asks node ids to be unique in the whole document, not only in their graph (section 2.3.2, memory).
 */
function graph(src: GraphSource, id: string, extra: string, firstNode: number, firstEdge: number): string[] {
  const ids = new Map(src.frames.map((f, i) => [f.file, `f${firstNode + i}`]));
  const refs = new Set(src.stations.map((s) => s.reference));
  const g = src.geometry ?? null;
  // Every frame of a station points where the station does (brackets share one pose).
  const pose = new Map(g?.poses.map((p) => [p.station, p]) ?? []);
  const out: string[] = [
    `  <graph id="${id}" edgedefault="undirected">`,
    `    ${data('g_verdict', src.verdict)}${data('g_sweep', src.sweepDeg)}${data('g_vertical', g?.verticalDeg)}${data('g_focal', g?.focalPx)}${data('g_closes', g?.closure ? g.closure.closes : null)}` +
      `${data('g_focal35', g?.focal35mm)}${data('g_k1', g?.distortion?.k1)}${data('g_k2', g?.distortion?.k2)}${extra}`,
  ];
  for (const f of src.frames) {
    out.push(
      `    <node id="${ids.get(f.file)}">${data('n_file', f.file)}${data('n_station', f.station)}${data('n_label', `station ${f.station + 1}: ${f.file}`)}${data('n_reference', refs.has(f.file))}` +
        `${data('n_width', f.width)}${data('n_height', f.height)}${data('n_capture', f.captureTime)}${data('n_verdict', f.verdict)}${data('n_flags', f.flags.join(' ') || null)}` +
        `${data('n_yaw', pose.get(f.station)?.yawDeg)}${data('n_pitch', pose.get(f.station)?.pitchDeg)}${data('n_roll', pose.get(f.station)?.rollDeg)}</node>`,
    );
  }
  src.pairs.forEach((p, i) => {
    const s = ids.get(p.a), t = ids.get(p.b);
    if (!s || !t) return;
    out.push(
      `    <edge id="e${firstEdge + i}" source="${s}" target="${t}">${data('e_kind', p.kind)}${data('e_verdict', p.verdict)}${data('e_reasons', p.reasons.join(' ') || null)}` +
        `${data('e_matches', p.matches)}${data('e_inliers', p.inliers)}${data('e_in_overlap', p.matchesInOverlap)}${data('e_overlap', p.overlap)}${data('e_ev', p.evDiff)}` +
        `${data('e_rms', p.rmsError)}${data('e_shift', p.shiftPx)}${data('e_h', p.homography ? p.homography.join(' ') : null)}${data('e_advice', p.advice.join(' / ') || null)}` +
        `${data('e_predicted', p.predictedOverlap)}${data('e_sharpness', p.sharpnessRatio)}${data('e_misfit', p.misfit)}${data('e_parallax', p.parallax)}</edge>`,
    );
  });
  out.push('  </graph>');
  return out;
}

const sequenceData = (q: ReportSequence): string =>
  `${data('g_sequence', q.index)}${data('g_first', q.firstFile)}${data('g_last', q.lastFile)}${data('g_start', q.startTime)}${data('g_end', q.endTime)}` +
  `${data('g_split', q.splitBy.map((s) => s.by).join(' ') || null)}`;

/**
 * The pair graph as GraphML (graphml.graphdrawing.org, the GraphML primer): frames as nodes with
 * file, station and, where the geometry placed it, the station's yaw, pitch and roll (a starting
 * point for a stitching program's optimiser); pairs as undirected edges from a to b, every measure a
 * declared data key; a missing measure (an unmatched pair, an unplaced station) is an absent data
 * element. `station` is the station's index from 0, as in the JSON report, for programs; `label`,
 * for a person and for the viewers that show a node's label, numbers it from 1 ("station 1: A.jpg").
 *
 * A card of several sequences gives one graph per sequence in the one document (the primer allows
 * any number of graphs in a graphml element), each with its own frames, pairs, verdict and geometry,
 * its stations counted from 0 within it as its poses are, its id "sequence-<index>" and its first
 * file as data, since a stitching program takes one sequence at a time. Single shots belong to no
 * sequence and so to no graph. A report of one sequence, or of none, is one graph as before.
 */
export function reportToGraphml(report: Report): string {
  const several = report.sequences && report.sequences.length > 1 ? report.sequences : null;
  const out: string[] = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    '<graphml xmlns="http://graphml.graphdrawing.org/xmlns" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="http://graphml.graphdrawing.org/xmlns http://graphml.graphdrawing.org/xmlns/1.0/graphml.xsd">',
    ...[...keys, ...(several ? sequenceKeys : [])].map((k) => `  <key id="${k.id}" for="${k.for}" attr.name="${k.name}" attr.type="${k.type}"/>`),
  ];
  if (!several) out.push(...graph(report, 'sequence', '', 0, 0));
  else {
    let nodes = 0, edges = 0;
    for (const q of several) {
      out.push(...graph(q, `sequence-${q.index}`, sequenceData(q), nodes, edges));
      nodes += q.frames.length;
      edges += q.pairs.length;
    }
  }
  out.push('</graphml>', '');
  return out.join('\n');
}
