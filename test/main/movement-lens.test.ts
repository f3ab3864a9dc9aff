// A turning camera through strong barrel distortion, rendered from real photographs of a prism of
// photo walls (test/helpers/photo-sequences.ts, sources listed there): the frames differ by a
// rotation and the lens only, so there is neither parallax nor movement. The pair is the one the
// corpus's lens-barrel-015 turn flagged (its frames 6 and 7), at its full 1500 x 1000 px: at half size
// the distortion left over by the homography is small enough that the old field passed too.
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyseFrameFile, analysePair } from '../../src/main/frame-analysis.js';
import { tempDir } from '../helpers/cli.js';
import { scenarios, writeSequence } from '../helpers/photo-sequences.js';

describe('a distorted pair of the photo-wall corpus', () => {
  it('has neither parallax nor movement at k1 = -0.15', async () => {
    const scenario = scenarios().find((s) => s.name === 'lens-barrel-015')!;
    const spec = { ...scenario.spec, frames: scenario.spec.frames.slice(5, 7), names: ['IMG_0006.jpg', 'IMG_0007.jpg'] };
    expect(spec.k1).toBe(-0.15);
    const folder = join(tempDir(), 'barrel');
    const written = await writeSequence(folder, spec);
    const [a, b] = await Promise.all(written.frames.map((f) => analyseFrameFile(join(folder, f.file), 1500)));
    const pair = analysePair(a, b);
    expect(pair.homography).not.toBeNull();
    expect({ parallax: pair.parallax, moved: pair.moved }).toEqual({ parallax: false, moved: [] });
    expect(pair.misfit).toBeLessThan(0.02);
  }, 30_000);
});
