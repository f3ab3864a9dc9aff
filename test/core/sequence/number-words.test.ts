// Numbers in advice as a person writes them (src/core/sequence/number-words.ts). The input values are what
// cameras write: EXIF ExposureTime, FNumber and FocalLength are RATIONALs (CIPA DC-008), so a
// third-stop setting arrives as its ratio (1/8000, 1/3, 8/10, 30/1; 56/10; 62/3 mm from a zoom).
// The expected forms follow the cameras' own displays of the third-stop shutter and aperture
// series (memory) and the example ("20.7 mm", "1/250 s", "+1.3 EV").
import { describe, expect, it } from 'vitest';
import { degrees, duration, fNumber, isoSpeed, millimetres, percent, shutterTime, signedEv } from '../../../src/core/sequence/number-words.js';

describe('number words', () => {
  it('writes focal lengths to a tenth of a millimetre, without noise or a trailing zero', () => {
    expect(millimetres(20.666666666666668)).toBe('20.7 mm');
    expect(millimetres(62 / 3)).toBe('20.7 mm');
    expect(millimetres(24)).toBe('24 mm');
    expect(millimetres(24.000000000000004)).toBe('24 mm');
    expect(millimetres(4.25)).toBe('4.3 mm');
  });

  it('writes shutter times as cameras show them: fractions below a third of a second, seconds above', () => {
    expect(shutterTime(1 / 8000)).toBe('1/8000 s');
    expect(shutterTime(1 / 250)).toBe('1/250 s');
    expect(shutterTime(0.004)).toBe('1/250 s');
    expect(shutterTime(1 / 3)).toBe('1/3 s');
    expect(shutterTime(0.33)).toBe('1/3 s');
    expect(shutterTime(0.25)).toBe('1/4 s');
    expect(shutterTime(0.3)).toBe('0.3 s');
    expect(shutterTime(0.6)).toBe('0.6 s');
    expect(shutterTime(0.8)).toBe('0.8 s');
    expect(shutterTime(1.3)).toBe('1.3 s');
    expect(shutterTime(2)).toBe('2 s');
    expect(shutterTime(3.2)).toBe('3.2 s');
    expect(shutterTime(13)).toBe('13 s');
    expect(shutterTime(30)).toBe('30 s');
  });

  it('writes EV differences signed, to a tenth, and zero without a sign', () => {
    expect(signedEv(1.26)).toBe('+1.3 EV');
    expect(signedEv(-0.7)).toBe('-0.7 EV');
    expect(signedEv(2)).toBe('+2 EV');
    expect(signedEv(-2)).toBe('-2 EV');
    expect(signedEv(0.04)).toBe('0 EV');
    expect(signedEv(-0.04)).toBe('0 EV');
    expect(signedEv(1 / 3)).toBe('+0.3 EV');
  });

  it('writes apertures as lenses are marked, ISO and shares as whole numbers', () => {
    expect(fNumber(5.6)).toBe('f/5.6');
    expect(fNumber(8)).toBe('f/8');
    expect(fNumber(11)).toBe('f/11');
    expect(fNumber(22)).toBe('f/22');
    expect(fNumber(1.4)).toBe('f/1.4');
    // An f-number computed from the APEX aperture value 5 (2^2.5): what the lens calls f/5.6 (memory).
    expect(fNumber(Math.SQRT2 ** 5)).toBe('f/5.7');
    expect(isoSpeed(400)).toBe('ISO 400');
    expect(isoSpeed(99.99999999999999)).toBe('ISO 100');
    expect(percent(0.08)).toBe('8 %');
    expect(percent(0.4549999)).toBe('45 %');
  });

  it('writes angles to a tenth below ten degrees, whole above, and one degree in the singular', () => {
    expect(degrees(1.04)).toBe('1 degree');
    expect(degrees(1.5)).toBe('1.5 degrees');
    expect(degrees(12.4)).toBe('12 degrees');
    expect(degrees(9.96)).toBe('10 degrees');
    expect(degrees(-0.02)).toBe('0 degrees');
  });

  it('refuses what is not a number in the project\'s words', () => {
    expect(() => shutterTime(0)).toThrow('Expected a positive number for seconds but received 0');
    expect(() => millimetres(Number.NaN)).toThrow('Expected a finite number for mm but received NaN');
  });
});

describe('duration', () => {
  it('says a pause in the unit a person would use, days and years for frames from other trips', () => {
    expect([duration(45.4), duration(600), duration(7500), duration(7200)]).toEqual(['45 s', '10 min', '2 h 5 min', '2 h']);
    // 62981.4 h between two frames (two trips years apart on one card) was once written in hours.
    expect(duration(62_981.4 * 3600)).toBe('about 7 years');
    expect([duration(3 * 86_400), duration(47 * 3600), duration(400 * 86_400)]).toEqual(['3 days', '47 h', 'about a year']);
    expect([duration(-1), duration(Number.NaN)]).toEqual(['an unknown time', 'an unknown time']);
  });
});
