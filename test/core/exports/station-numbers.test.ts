// Station numbers where a person reads them count from 1 (the command's output says "station 1" for
// index 0); where a program reads them (JSON, the GraphML `station` data, the truth file's arrays)
// they stay indices from 0. Checked on the exports and on the demo plan's plain-words details.
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { planDemoShoot } from '../../../src/core/demo/demo-plan.js';
import { reportToDot } from '../../../src/core/exports/dot.js';
import { reportToGraphml } from '../../../src/core/exports/graphml.js';
import type { Analysis } from '../../../src/core/sequence/report.js';
import { defaultBudget } from '../../../src/core/sequence/report.js';
import { judge } from '../../../src/core/sequence/verdicts.js';

const settings = { exposureTime: 0.004, fNumber: 8, iso: 100, evBias: 0, focalLength: 35, focalLength35: 35, whiteBalance: null, make: null, model: null };
const files = ['a.jpg', 'b.jpg'];
const analysis: Analysis = {
  folder: '/card',
  frames: files.map((file) => ({ file, width: 3000, height: 2000, captureTime: null, settings, sharpness: 2, keypoints: 1500 })),
  stations: files.map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
  pairs: [{ a: 'a.jpg', b: 'b.jpg', kind: 'neighbour', matches: 300, inliers: 250, matchesInOverlap: 280, overlap: 0.44, homography: [1, 0, 1700, 0, 1, 0, 0, 0, 1], evDiff: 0, rmsError: 0.9, shiftPx: null }],
  skipped: [],
  sweepDeg: null,
  geometry: null,
};
const report = judge(analysis, defaultBudget);

describe('station numbers', () => {
  it('GraphML: `station` stays the index from 0, `label` numbers the station from 1', () => {
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '@', isArray: (n) => ['key', 'node', 'data'].includes(n) }).parse(reportToGraphml(report));
    const name = new Map(doc.graphml.key.map((k: Record<string, string>) => [k['@id'], k['@attr.name']]));
    const nodes = doc.graphml.graph.node.map((n: { data: { '@key': string; '#text': unknown }[] }) => Object.fromEntries(n.data.map((d) => [name.get(d['@key']), String(d['#text'])])));
    expect(nodes.map((n: Record<string, string>) => [n.station, n.label])).toEqual([['0', 'station 1: a.jpg'], ['1', 'station 2: b.jpg']]);
  });

  it('DOT: station clusters are labelled from 1', () => {
    const labels = [...reportToDot(report).matchAll(/label="(station \d+)"/g)].map((m) => m[1]);
    expect(labels).toEqual(['station 1', 'station 2']);
  });

  it("the demo's plain-words details number the stations their arrays index from 0 from 1", () => {
    const plan = planDemoShoot({ width: 600, height: 400 });
    for (const p of plan.problems) {
      const named = [...p.detail.matchAll(/[Ss]tations? (\d+)(?: and (\d+))?/g)].flatMap((m) => [m[1], m[2]]).filter(Boolean).map(Number);
      expect(named.length, p.detail).toBeGreaterThan(0);
      for (const n of named) expect(p.stations.map((s) => s + 1), p.detail).toContain(n);
    }
  });
});
