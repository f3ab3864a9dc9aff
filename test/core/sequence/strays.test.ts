// Which files belong to a sequence: the card's majority of size, aspect and camera (EXIF Make and
// Model, CIPA DC-008). The limits (sides within a factor of 2, aspect within 8 %) are common practice.
import { describe, expect, it } from 'vitest';
import type { MemberInput } from '../../../src/core/sequence/strays.js';
import { sequenceLook, strayReason } from '../../../src/core/sequence/strays.js';

const camera = (width: number, height: number): MemberInput => ({ width, height, make: 'Maker', model: 'Body 1' });

describe('stray files', () => {
  it('leaves out a 1x1 file without EXIF and a phone shot among a camera card, by the majority', () => {
    const phone: MemberInput = { width: 4032, height: 3024, make: 'Phone Co', model: 'P9' };
    const dot: MemberInput = { width: 1, height: 1, make: null, model: null };
    // The stray files come first: membership must not follow the first file.
    const files = [dot, phone, camera(6000, 4000), camera(4000, 6000), camera(6000, 4000), camera(6000, 4000)];
    const look = sequenceLook(files);
    expect(look).toMatchObject({ long: 6000, short: 4000 });
    expect(strayReason(dot, look)).toMatch(/^1x1 px while the sequence's frames are 6000x4000/);
    expect(strayReason(phone, look)).toMatch(/^taken with Phone Co P9/);
    // A portrait frame of the same camera belongs; so does one without EXIF at the sequence's size.
    expect(strayReason(camera(4000, 6000), look)).toBeNull();
    expect(strayReason({ width: 6000, height: 4000, make: null, model: null }, look)).toBeNull();
  });

  it('keeps a frame cropped a little (a size mismatch, not a stray) and judges nothing without a majority', () => {
    const look = sequenceLook([camera(6000, 4000), camera(6000, 4000), camera(6000, 4000)]);
    expect(strayReason(camera(5800, 3900), look)).toBeNull();
    expect(strayReason(camera(1500, 1000), look)).not.toBeNull();
    expect(strayReason(camera(6000, 3375), look)).not.toBeNull();
    // Two sizes half and half, and two cameras: no majority, nobody is a stray.
    const split = sequenceLook([camera(6000, 4000), camera(6000, 4000), { width: 1, height: 1, make: 'A', model: 'B' }, { width: 1, height: 1, make: 'A', model: 'B' }]);
    expect(split.long).toBeNull();
    expect(split.camera).toBeNull();
    expect(strayReason({ width: 1, height: 1, make: 'C', model: 'D' }, split)).toBeNull();
  });
});
