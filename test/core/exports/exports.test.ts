// Exports of the report: GraphML parsed back with a general XML parser and checked against the
// GraphML structure (GraphML primer, graphml.graphdrawing.org: keys declared with id, for,
// attr.name and attr.type; data elements refer to declared keys for their element kind; edges
// refer to nodes); CSV parsed back per RFC 4180 (csv-parse); DOT against the DOT grammar's basics
// (Graphviz documentation).
import { parse as parseCsv } from 'csv-parse/sync';
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { reportToCsv, tiePointsToCsv } from '../../../src/core/exports/csv.js';
import { reportToDot } from '../../../src/core/exports/dot.js';
import { reportToGraphml } from '../../../src/core/exports/graphml.js';
import type { Analysis, SequenceAnalysis } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { judge } from '../../../src/core/sequence/verdicts.js';

const settings = { exposureTime: 0.004, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: null, make: null, model: null };
const analysis: Analysis = {
  folder: '/card',
  frames: ['A, "first".jpg', 'B <2>.jpg', 'C & D.jpg'].map((file) => ({ file, width: 3000, height: 2000, captureTime: '2026-06-01T05:00:00.000', settings, sharpness: 2, keypoints: 1500 })),
  stations: ['A, "first".jpg', 'B <2>.jpg', 'C & D.jpg'].map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
  pairs: [
    { a: 'A, "first".jpg', b: 'B <2>.jpg', kind: 'neighbour', matches: 320, inliers: 250, matchesInOverlap: 300, overlap: 0.44, homography: [0.9, 0.01, 1700, -0.01, 1, 3, -1e-5, 0, 1], evDiff: 0.1, rmsError: 0.9, shiftPx: null, misfit: 0.02, parallax: false, sharpnessRatio: 0.97 },
    { a: 'B <2>.jpg', b: 'C & D.jpg', kind: 'neighbour', matches: 12, inliers: 0, matchesInOverlap: 0, overlap: null, homography: null, evDiff: null, rmsError: null, shiftPx: null, predictedOverlap: 0.08 },
  ],
  skipped: [],
  sweepDeg: null,
  geometry: null,
};
const report = judge(analysis, defaultBudget);

describe('GraphML export', () => {
  const xml = reportToGraphml(report);
  const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@', isArray: (name) => ['key', 'node', 'edge', 'data'].includes(name) }).parse(xml);

  it('is GraphML: namespace, declared keys, a graph with nodes and edges', () => {
    const g = doc.graphml;
    expect(g['@xmlns']).toBe('http://graphml.graphdrawing.org/xmlns');
    const keys = new Map<string, { for: string; type: string; name: string }>();
    for (const k of g.key) {
      expect(['node', 'edge', 'graph', 'all']).toContain(k['@for']);
      expect(['boolean', 'int', 'long', 'float', 'double', 'string']).toContain(k['@attr.type']);
      keys.set(k['@id'], { for: k['@for'], type: k['@attr.type'], name: k['@attr.name'] });
    }
    const graph = g.graph;
    expect(graph['@edgedefault']).toBe('undirected');
    const nodeIds = new Set(graph.node.map((n: { '@id': string }) => n['@id']));
    expect(nodeIds.size).toBe(3);
    for (const e of graph.edge) {
      expect(nodeIds.has(e['@source'])).toBe(true);
      expect(nodeIds.has(e['@target'])).toBe(true);
    }
    const checkData = (el: { data?: { '@key': string; '#text'?: unknown }[] }, kind: string): void => {
      for (const d of el.data ?? []) {
        const k = keys.get(d['@key']);
        expect(k, `undeclared key ${d['@key']}`).toBeDefined();
        expect([kind, 'all']).toContain(k!.for);
        if (k!.type === 'int') expect(Number.isInteger(Number(d['#text']))).toBe(true);
        if (k!.type === 'double') expect(Number.isFinite(Number(d['#text']))).toBe(true);
      }
    };
    graph.node.forEach((n: never) => checkData(n, 'node'));
    graph.edge.forEach((e: never) => checkData(e, 'edge'));
  });

  it('carries every measure of a pair, and escapes file names', () => {
    const graph = doc.graphml.graph;
    const keyName = new Map(doc.graphml.key.map((k: Record<string, string>) => [k['@id'], k['@attr.name']]));
    const fields = (el: { data: { '@key': string; '#text': unknown }[] }): Record<string, string> =>
      Object.fromEntries(el.data.map((d) => [keyName.get(d['@key']), String(d['#text'])]));
    const files = graph.node.map((n: never) => fields(n).file);
    expect(files).toEqual(analysis.frames.map((f) => f.file));
    const e0 = fields(graph.edge[0]);
    expect(Number(e0.overlap)).toBeCloseTo(0.44, 10);
    expect(Number(e0.inliers)).toBe(250);
    expect(e0.homography.split(' ').map(Number)).toEqual(analysis.pairs[0].homography);
    const e1 = fields(graph.edge[1]);
    expect(e1.overlap).toBeUndefined();
    expect(e1.verdict).toBe('reshoot');
  });

  it('gives placed frames their station\'s yaw, pitch and roll, and leaves unplaced ones without', () => {
    const placed = judge({
      ...analysis,
      geometry: {
        focalPx: 2916.7, focalFrom: 'exif', unplaced: [2], horizontalDeg: 110, verticalDeg: 38, gaps: [], closure: null, rmsPx: 0.3, rows: [{ pitchDeg: 0.1, stations: [0, 1] }],
        poses: [{ station: 0, yawDeg: 0, pitchDeg: 0.2, rollDeg: -0.1 }, { station: 1, yawDeg: 31.5, pitchDeg: -0.3, rollDeg: 0.4 }],
      },
    }, defaultBudget);
    const d = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@', isArray: (name) => ['key', 'node', 'edge', 'data'].includes(name) }).parse(reportToGraphml(placed));
    const keyName = new Map(d.graphml.key.map((k: Record<string, string>) => [k['@id'], k['@attr.name']]));
    const fields = (el: { data: { '@key': string; '#text': unknown }[] }): Record<string, string> =>
      Object.fromEntries(el.data.map((x) => [keyName.get(x['@key']), String(x['#text'])]));
    const nodes = d.graphml.graph.node.map((n: never) => fields(n));
    expect(Number(nodes[1].yawDeg)).toBeCloseTo(31.5, 10);
    expect(Number(nodes[1].rollDeg)).toBeCloseTo(0.4, 10);
    expect(nodes[2].yawDeg).toBeUndefined();
    expect(Number(fields(d.graphml.graph).focalPx)).toBeCloseTo(2916.7, 10);
    const edges = d.graphml.graph.edge.map((e: never) => fields(e));
    expect([edges[0].sharpnessRatio, edges[0].parallax, edges[0].predictedOverlap]).toEqual(['0.97', 'false', undefined]);
    expect(edges[1].predictedOverlap).toBe('0.08');
  });
});

describe('CSV export (RFC 4180)', () => {
  it('parses back to one row per pair with the report values', () => {
    const text = reportToCsv(report);
    expect(text.includes('\r\n')).toBe(true);
    const rows = parseCsv(text, { columns: true }) as Record<string, string>[];
    expect(rows).toHaveLength(report.pairs.length);
    expect(rows[0].a).toBe('A, "first".jpg');
    expect(Number(rows[0].overlap)).toBeCloseTo(0.44, 4);
    expect(rows[0].homography.split(' ').map(Number)).toEqual(analysis.pairs[0].homography);
    expect(rows[1].overlap).toBe('');
    expect(rows[1].verdict).toBe('reshoot');
    expect(rows[1].reasons).toBe('no-match');
    // Added later, after the first fourteen columns: the predicted overlap of a pair without a
    // model, and what was measured on a registered pair's overlap.
    expect(Object.keys(rows[0]).slice(14)).toEqual(['predicted_overlap', 'sharpness_ratio', 'misfit', 'parallax']);
    expect([rows[0].predicted_overlap, rows[0].sharpness_ratio, rows[0].misfit, rows[0].parallax]).toEqual(['', '0.970', '0.0200', 'no']);
    expect([rows[1].predicted_overlap, rows[1].sharpness_ratio, rows[1].parallax]).toEqual(['0.0800', '', '']);
  });

  it('writes tie points as a, b, xa, ya, xb, yb', () => {
    const rows = parseCsv(tiePointsToCsv([{ a: 'x.jpg', b: 'y.jpg', points: [1, 2, 3, 4, 5.5, 6, 7, 8] }]), { columns: true }) as Record<string, string>[];
    expect(rows).toEqual([
      { a: 'x.jpg', b: 'y.jpg', xa: '1.00', ya: '2.00', xb: '3.00', yb: '4.00' },
      { a: 'x.jpg', b: 'y.jpg', xa: '5.50', ya: '6.00', xb: '7.00', yb: '8.00' },
    ]);
  });
});

describe('DOT export', () => {
  it('is one undirected graph with an edge per pair and the verdict in words', () => {
    const dot = reportToDot(report);
    expect(dot.startsWith('graph sequence {')).toBe(true);
    expect((dot.match(/ -- /g) ?? []).length).toBe(report.pairs.length);
    expect(dot).toContain('"A, \\"first\\".jpg" -- "B <2>.jpg"');
    expect(dot).toMatch(/reshoot: no-match/);
    let depth = 0;
    for (const ch of dot.replace(/"(?:[^"\\]|\\.)*"/g, '')) {
      if (ch === '{') depth++;
      if (ch === '}') depth--;
      expect(depth).toBeGreaterThanOrEqual(0);
    }
    expect(depth).toBe(0);
  });
});

// A card of two sequences and a single shot, written by hand: the first a plain pan judged ok, the
// second a bracketed pan at another focal length whose neighbour pair overlaps 25 % (weak under the
// default budget's 30 %). Each sequence's exports are compared with those of the same sequence
// judged alone, as if it were alone in a folder.
const seqFrame = (file: string, time: string, focal: number, evBias = 0) => ({
  file, width: 3000, height: 2000, captureTime: `2026-06-01T${time}.000`, sharpness: 2, keypoints: 1500,
  settings: { ...settings, focalLength: focal, focalLength35: focal, evBias, exposureTime: 0.004 * 2 ** evBias },
});
const pan: Analysis = {
  folder: '/card',
  frames: [seqFrame('IMG_0101.jpg', '05:00:00', 35), seqFrame('IMG_0102.jpg', '05:00:03', 35), seqFrame('IMG_0103.jpg', '05:00:06', 35)],
  stations: ['IMG_0101.jpg', 'IMG_0102.jpg', 'IMG_0103.jpg'].map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
  pairs: [
    { a: 'IMG_0101.jpg', b: 'IMG_0102.jpg', kind: 'neighbour', matches: 320, inliers: 250, matchesInOverlap: 300, overlap: 0.45, homography: [1, 0, 1650, 0, 1, 2, 0, 0, 1], evDiff: 0.05, rmsError: 0.8, shiftPx: null },
    { a: 'IMG_0102.jpg', b: 'IMG_0103.jpg', kind: 'neighbour', matches: 300, inliers: 230, matchesInOverlap: 280, overlap: 0.42, homography: [1, 0, 1740, 0, 1, -1, 0, 0, 1], evDiff: -0.02, rmsError: 0.9, shiftPx: null },
  ],
  skipped: [],
  sweepDeg: 114,
  geometry: {
    focalPx: 2916.7, focalFrom: 'exif', unplaced: [], horizontalDeg: 114, verticalDeg: 38, gaps: [], closure: null, rmsPx: 0.3, rows: [{ pitchDeg: 0, stations: [0, 1, 2] }],
    poses: [{ station: 0, yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, { station: 1, yawDeg: 30, pitchDeg: 0.1, rollDeg: 0 }, { station: 2, yawDeg: 60, pitchDeg: -0.1, rollDeg: 0.2 }],
  },
};
const brackets: Analysis = {
  folder: '/card',
  frames: [seqFrame('IMG_0201.jpg', '05:10:00', 20), seqFrame('IMG_0202.jpg', '05:10:01', 20, -2), seqFrame('IMG_0203.jpg', '05:10:05', 20), seqFrame('IMG_0204.jpg', '05:10:06', 20, -2)],
  stations: [
    { index: 0, frames: ['IMG_0201.jpg', 'IMG_0202.jpg'], reference: 'IMG_0201.jpg', evOffsets: [0, -2], groupedBy: 'exif' },
    { index: 1, frames: ['IMG_0203.jpg', 'IMG_0204.jpg'], reference: 'IMG_0203.jpg', evOffsets: [0, -2], groupedBy: 'exif' },
  ],
  pairs: [
    { a: 'IMG_0201.jpg', b: 'IMG_0202.jpg', kind: 'bracket', matches: 900, inliers: 850, matchesInOverlap: 880, overlap: 0.99, homography: [1, 0, 0.4, 0, 1, 0.3, 0, 0, 1], evDiff: -2, rmsError: 0.5, shiftPx: 0.5 },
    { a: 'IMG_0203.jpg', b: 'IMG_0204.jpg', kind: 'bracket', matches: 880, inliers: 840, matchesInOverlap: 860, overlap: 0.99, homography: [1, 0, -0.2, 0, 1, 0.1, 0, 0, 1], evDiff: -2, rmsError: 0.5, shiftPx: 0.3 },
    { a: 'IMG_0201.jpg', b: 'IMG_0203.jpg', kind: 'neighbour', matches: 150, inliers: 95, matchesInOverlap: 120, overlap: 0.25, homography: [1, 0, 2250, 0, 1, 4, 0, 0, 1], evDiff: 0.1, rmsError: 1.1, shiftPx: null },
  ],
  skipped: [],
  sweepDeg: 130,
  geometry: {
    focalPx: 1666.7, focalFrom: 'exif', unplaced: [], horizontalDeg: 130, verticalDeg: 62, gaps: [], closure: null, rmsPx: 0.4, rows: [{ pitchDeg: 0, stations: [0, 1] }],
    poses: [{ station: 0, yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, { station: 1, yawDeg: 45, pitchDeg: 0.3, rollDeg: -0.2 }],
  },
};
const asSequence = (a: Analysis, index: number, splitBy: SequenceAnalysis['splitBy']): SequenceAnalysis =>
  ({ index, splitBy, frames: a.frames, stations: a.stations, pairs: a.pairs, sweepDeg: a.sweepDeg, geometry: a.geometry });
const singleShot = { file: 'IMG_0150.jpg', captureTime: '2026-06-01T05:05:00.000', reason: 'overlaps no other frame' };
const card: Analysis = {
  folder: '/card',
  frames: [...pan.frames, ...brackets.frames],
  stations: [...pan.stations, ...brackets.stations.map((s) => ({ ...s, index: s.index + pan.stations.length }))],
  pairs: [...pan.pairs, ...brackets.pairs],
  skipped: [],
  sweepDeg: null,
  geometry: null,
  sequences: [asSequence(pan, 1, []), asSequence(brackets, 2, [{ by: 'pause', seconds: 594, rhythmSeconds: 3 }, { by: 'focal-length', fromMm: 35, toMm: 20 }])],
  singleShots: [singleShot],
};
const cardReport = judge(card, defaultBudget);
const alone = [judge(pan, defaultBudget), judge(brackets, defaultBudget)];

type GraphmlData = { '@key': string; '#text'?: unknown };
type GraphmlElement = { '@id': string; '@source'?: string; '@target'?: string; data?: GraphmlData[] };
type GraphmlGraph = GraphmlElement & { '@edgedefault': string; node: GraphmlElement[]; edge?: GraphmlElement[] };
/** A GraphML document parsed back, its keys checked as the first test does, and each element's data by key name. */
function readGraphml(xml: string): { graphs: GraphmlGraph[]; fields: (el: GraphmlElement) => Record<string, string> } {
  const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@', isArray: (name) => ['key', 'graph', 'node', 'edge', 'data'].includes(name) }).parse(xml);
  expect(doc.graphml['@xmlns']).toBe('http://graphml.graphdrawing.org/xmlns');
  const keys = new Map<string, { for: string; type: string; name: string }>();
  for (const k of doc.graphml.key) keys.set(k['@id'], { for: k['@for'], type: k['@attr.type'], name: k['@attr.name'] });
  const fields = (el: GraphmlElement): Record<string, string> => Object.fromEntries((el.data ?? []).map((d) => [keys.get(d['@key'])?.name, String(d['#text'])]));
  const graphs = doc.graphml.graph as GraphmlGraph[];
  const check = (el: GraphmlElement, kind: string): void => {
    for (const d of el.data ?? []) {
      const k = keys.get(d['@key']);
      expect(k, `undeclared key ${d['@key']}`).toBeDefined();
      expect([kind, 'all']).toContain(k!.for);
      if (k!.type === 'int') expect(Number.isInteger(Number(d['#text']))).toBe(true);
      if (k!.type === 'double') expect(Number.isFinite(Number(d['#text']))).toBe(true);
    }
  };
  for (const g of graphs) {
    check(g, 'graph');
    g.node.forEach((n) => check(n, 'node'));
    (g.edge ?? []).forEach((e) => check(e, 'edge'));
  }
  return { graphs, fields };
}

describe('exports of a card of several sequences', () => {
  it('GraphML: one graph per sequence in one document, each as the sequence alone exports it', () => {
    const { graphs, fields } = readGraphml(reportToGraphml(cardReport));
    expect(graphs.map((g) => g['@id'])).toEqual(['sequence-1', 'sequence-2']);
    // Node ids unique in the whole document, not only in their graph (GraphML primer, section 2.3.2, memory).
    const allNodes = graphs.flatMap((g) => g.node.map((n) => n['@id']));
    expect(new Set(allNodes).size).toBe(pan.frames.length + brackets.frames.length);
    const allEdges = graphs.flatMap((g) => (g.edge ?? []).map((e) => e['@id']));
    expect(new Set(allEdges).size).toBe(pan.pairs.length + brackets.pairs.length);
    graphs.forEach((g, k) => {
      expect(g['@edgedefault']).toBe('undirected');
      // Edges join nodes of their own graph only.
      const own = new Set(g.node.map((n) => n['@id']));
      for (const e of g.edge ?? []) expect(own.has(e['@source']!) && own.has(e['@target']!)).toBe(true);
      // The same nodes, edges and graph data as the sequence exported alone, ids aside.
      const one = readGraphml(reportToGraphml(alone[k])).graphs[0];
      expect(g.node.map(fields)).toEqual(one.node.map(fields));
      expect((g.edge ?? []).map(fields)).toEqual((one.edge ?? []).map(fields));
      const { sequence, firstFile, lastFile, startTime, endTime, splitBy, ...rest } = fields(g);
      expect(rest).toEqual(fields(one));
      expect([sequence, firstFile, lastFile, startTime, endTime]).toEqual([
        String(k + 1), [pan, brackets][k].frames[0].file, [pan, brackets][k].frames.at(-1)!.file,
        [pan, brackets][k].frames[0].captureTime, [pan, brackets][k].frames.at(-1)!.captureTime,
      ]);
      expect(splitBy).toBe(k === 0 ? undefined : 'pause focal-length');
    });
    // By hand: the pan is ok, the bracketed pan weak (25 % overlap under the budget's 30 %), each
    // graph with its own focal length, and a frame of the second sequence placed by that sequence's
    // own station 1 (45 degrees), not the card's station 1 (the pan's, 30 degrees).
    expect(graphs.map((g) => fields(g).verdict)).toEqual(['ok', 'weak']);
    expect(graphs.map((g) => Number(fields(g).focalPx))).toEqual([2916.7, 1666.7]);
    const f203 = graphs[1].node.map(fields).find((n) => n.file === 'IMG_0203.jpg')!;
    expect([f203.station, f203.yawDeg]).toEqual(['1', '45']);
    // The single shot is in no graph.
    expect(graphs.flatMap((g) => g.node.map((n) => fields(n).file))).not.toContain(singleShot.file);
  });

  it('CSV: a sequence column after the existing ones, each sequence\'s rows as it alone exports them', () => {
    const rows = parseCsv(reportToCsv(cardReport), { columns: true }) as Record<string, string>[];
    const header = Object.keys((parseCsv(reportToCsv(alone[0]), { columns: true }) as Record<string, string>[])[0]);
    expect(Object.keys(rows[0])).toEqual([...header, 'sequence']);
    expect(rows.map((r) => r.sequence)).toEqual(['1', '1', '2', '2', '2']);
    const without = rows.map(({ sequence: _s, ...r }) => r);
    expect(without).toEqual(alone.flatMap((r) => parseCsv(reportToCsv(r), { columns: true }) as Record<string, string>[]));
    expect(rows.find((r) => r.a === 'IMG_0201.jpg' && r.b === 'IMG_0203.jpg')?.reasons).toBe('low-overlap');
  });

  it('tie points: a sequence column when given the report of a card, empty for a pair no sequence lists', () => {
    const sets = [{ a: 'IMG_0102.jpg', b: 'IMG_0103.jpg', points: [1, 2, 3, 4] }, { a: 'IMG_0201.jpg', b: 'IMG_0203.jpg', points: [5, 6, 7, 8] }, { a: 'IMG_0103.jpg', b: 'IMG_0201.jpg', points: [9, 10, 11, 12] }];
    const rows = parseCsv(tiePointsToCsv(sets, cardReport), { columns: true }) as Record<string, string>[];
    expect(rows.map((r) => [r.a, r.xa, r.sequence])).toEqual([['IMG_0102.jpg', '1.00', '1'], ['IMG_0201.jpg', '5.00', '2'], ['IMG_0103.jpg', '9.00', '']]);
    expect(tiePointsToCsv(sets, alone[0])).toBe(tiePointsToCsv(sets));
  });

  it('DOT: one graph, a labelled cluster per sequence holding its stations and its pairs', () => {
    const dot = reportToDot(cardReport);
    expect(dot.startsWith('graph card {')).toBe(true);
    // Each cluster's block, found by matching braces outside quoted strings (DOT language, Graphviz documentation).
    const block = (name: string): string => {
      const start = dot.indexOf(`subgraph "${name}" {`);
      expect(start, name).toBeGreaterThan(0);
      let depth = 0;
      const masked = dot.replace(/"(?:[^"\\]|\\.)*"/g, (m) => ' '.repeat(m.length));
      for (let i = start; i < dot.length; i++) {
        if (masked[i] === '{') depth++;
        if (masked[i] === '}' && --depth === 0) return dot.slice(start, i + 1);
      }
      throw new Error(`unclosed ${name}`);
    };
    const clusters = [block('cluster_1'), block('cluster_2')];
    expect(clusters[0]).toContain('label="sequence 1 of 2: IMG_0101.jpg to IMG_0103.jpg, ok";');
    expect(clusters[1]).toContain('label="sequence 2 of 2: IMG_0201.jpg to IMG_0204.jpg, weak";');
    expect(clusters.map((c) => (c.match(/ -- /g) ?? []).length)).toEqual([pan.pairs.length, brackets.pairs.length]);
    expect((dot.match(/ -- /g) ?? []).length).toBe(pan.pairs.length + brackets.pairs.length);
    expect(block('cluster_2_station_2')).toContain('"IMG_0204.jpg";');
    expect(clusters[1]).toContain('subgraph "cluster_2_station_2"');
    const names = [...dot.matchAll(/subgraph "([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(names).size).toBe(names.length);
    expect(dot).not.toContain(singleShot.file);
    const masked = dot.replace(/"(?:[^"\\]|\\.)*"/g, '');
    expect((masked.match(/\{/g) ?? []).length).toBe((masked.match(/\}/g) ?? []).length);
  });

  it('a report of one sequence exports exactly as the same folder without sequences', () => {
    const one = judge({ ...pan, sequences: [asSequence(pan, 1, [])], singleShots: [singleShot] }, defaultBudget);
    expect(one.sequences).toHaveLength(1);
    expect(reportToGraphml(one)).toBe(reportToGraphml(alone[0]));
    expect(reportToCsv(one)).toBe(reportToCsv(alone[0]));
    expect(reportToDot(one)).toBe(reportToDot(alone[0]));
    const sets = [{ a: 'IMG_0101.jpg', b: 'IMG_0102.jpg', points: [1, 2, 3, 4] }];
    expect(tiePointsToCsv(sets, one)).toBe(tiePointsToCsv(sets));
  });
});
