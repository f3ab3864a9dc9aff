// What a hostile or broken file name can do to a terminal or a spreadsheet. Terminal: ECMA-48
// control functions begin with ESC (0x1b) or a C1 control, and CR returns to the start of the line
// (memory); Unicode's bidirectional overrides (U+202A-U+202E, U+2066-U+2069) reorder what is shown.
// Spreadsheets: the OWASP page "CSV Injection" advises prefixing cells that begin with =, +, -, @,
// tab or carriage return with an apostrophe (memory).
import { describe, expect, it } from 'vitest';
import { parse as parseCsv } from 'csv-parse/sync';
import { csvField, reportToCsv } from '../../src/core/exports/csv.js';
import { defaultBudget } from '../../src/core/sequence/report.js';
import type { Analysis, FrameSettings } from '../../src/core/sequence/report.js';
import { judge } from '../../src/core/sequence/verdicts.js';
import { formatSummary, forTerminal } from '../../src/main/summary.js';

const settings: FrameSettings = { exposureTime: 1 / 250, fNumber: 8, iso: 100, evBias: 0, focalLength: 24, focalLength35: 24, whiteBalance: null, make: null, model: null };
const names = ['ok.jpg', '\u001b[2J\u001b[31mclear.jpg', 'line\nbreak.jpg', 'back\rover.jpg', 'gpj.\u202eexe.jpg', '=HYPERLINK("http://x").jpg'];
const analysis: Analysis = {
  folder: '/card',
  frames: names.map((file) => ({ file, width: 3000, height: 2000, captureTime: null, settings, sharpness: 2, keypoints: 1500 })),
  stations: names.map((file, index) => ({ index, frames: [file], reference: file, evOffsets: [0], groupedBy: 'single' as const })),
  pairs: names.slice(1).map((b, k) => ({ a: names[k], b, kind: 'neighbour' as const, matches: 10, inliers: 0, matchesInOverlap: 0, overlap: null, homography: null, evDiff: null, rmsError: null, shiftPx: null })),
  skipped: [{ file: 'bad\u001b]0;title\u0007.jpg', code: 'unreadable', reason: 'damaged or cut short: copy it from the card again' }],
  sweepDeg: null,
  geometry: null,
};

describe('file names in the terminal', () => {
  it('writes control characters and direction overrides as escapes', () => {
    expect(forTerminal('a\u001b[2Jb\rc\nd\u202ee\u0007')).toBe('a\\x1b[2Jb\\x0dc\\x0ad\\u202ee\\x07');
    expect(forTerminal('café 20.7 mm, ±1 EV')).toBe('café 20.7 mm, ±1 EV');
  });

  it('leaves no control character in the summary but the line ends', () => {
    const text = formatSummary(judge(analysis, defaultBudget));
    // eslint-disable-next-line no-control-regex -- control characters are what this looks for
    expect(text).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u202a-\u202e]/);
    expect(text).toContain('\\x1b[2J\\x1b[31mclear.jpg');
    expect(text).toContain('line\\x0abreak.jpg');
    expect(text).toContain('bad\\x1b]0;title\\x07.jpg');
  });
});

describe('file names in the CSV export', () => {
  it('keeps a spreadsheet from taking a name for a formula, and numbers as they are', () => {
    expect(csvField('=1+1')).toBe("'=1+1");
    expect(csvField('@SUM(A1)')).toBe("'@SUM(A1)");
    expect(csvField('-0.032')).toBe('-0.032');
    expect(csvField(-2)).toBe('-2');
    expect(csvField('+1.5e3')).toBe('+1.5e3');
    const rows = parseCsv(reportToCsv(judge(analysis, defaultBudget)), { columns: true }) as Record<string, string>[];
    expect(rows.at(-1)!.b).toBe('\'=HYPERLINK("http://x").jpg');
    expect(rows.every((r) => !/^[=+\-@]/.test(r.a) && !/^[=+\-@]/.test(r.b))).toBe(true);
  });
});
