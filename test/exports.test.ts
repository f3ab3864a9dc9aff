// Exports of the report: GraphML parsed back with a general XML parser and checked against the
// GraphML structure (GraphML primer, graphml.graphdrawing.org: keys declared with id, for,
// attr.name and attr.type; data elements refer to declared keys for their element kind; edges
// refer to nodes); CSV parsed back per RFC 4180 (csv-parse); DOT against the DOT grammar's basics
// (Graphviz documentation).
import { parse as parseCsv } from 'csv-parse/sync';
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { reportToCsv, tiePointsToCsv } from '../src/core/exports/csv.js';
import { reportToDot } from '../src/core/exports/dot.js';
import { reportToGraphml } from '../src/core/exports/graphml.js';
import type { Analysis } from '../src/core/report.js';
import { defaultBudget } from '../src/core/report.js';
import { judge } from '../src/core/verdicts.js';

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
