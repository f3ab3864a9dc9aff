/**
 * Numbers as a person writes them in advice: rounded to what the reader can act on, never with
 * floating-point noise ("20.7 mm", not "20.666666666666668 mm"). The forms follow how cameras show
 * their settings and how photographers write them (common practice).
 */

function finite(x: number, name: string): void {
  if (typeof x !== 'number' || !Number.isFinite(x)) throw new TypeError(`Expected a finite number for ${name} but received ${String(x)}`);
}

function positive(x: number, name: string): void {
  if (typeof x !== 'number' || !Number.isFinite(x) || x <= 0) throw new TypeError(`Expected a positive number for ${name} but received ${String(x)}`);
}

/** At most one decimal, none when it is zero: 20.666... -> "20.7", 24.0 -> "24". */
const tenths = (x: number): string => String(Number(x.toFixed(1)) || 0);

/** A length in mm as a photographer writes it: whole millimetres, a tenth when it has one ("24 mm", "20.7 mm"). */
export function millimetres(mm: number): string {
  finite(mm, 'mm');
  return `${tenths(mm)} mm`;
}

/**
 * How far 1/t may lie from a whole number for t to be written as the fraction 1/n: cameras store
 * these times as exact ratios, but some write 1/3 s as 0.33 (1 %); 3 % leaves room for that and
 * stays far from the next third-stop time (0.3 s is 10 % from 1/3).
 */
const unitFractionTolerance = 0.03;

/**
 * A shutter time as cameras show it: fractions of a second as "1/250 s" (and "1/3 s"), longer
 * times in seconds with a tenth below ten seconds ("0.6 s", "1.3 s", "2 s") and whole above ("30 s").
 */
export function shutterTime(seconds: number): string {
  positive(seconds, 'seconds');
  const n = 1 / seconds;
  const whole = Math.round(n);
  if (seconds < 0.3 || (whole >= 2 && Math.abs(n - whole) <= unitFractionTolerance * n)) return `1/${whole} s`;
  return seconds < 10 ? `${tenths(seconds)} s` : `${Math.round(seconds)} s`;
}

/** An exposure difference or bracket offset, signed, to a tenth: "+1.3 EV", "-0.7 EV", "+2 EV", "0 EV". */
export function signedEv(ev: number): string {
  finite(ev, 'ev');
  const t = Number(ev.toFixed(1));
  if (t === 0) return '0 EV';
  return `${t > 0 ? '+' : '-'}${tenths(Math.abs(t))} EV`;
}

/**
 * An aperture to two significant digits, as lenses are marked: "f/5.6", "f/8", "f/11", "f/22"
 * (an f-number derived from the APEX aperture value, such as 5.657, reads "f/5.7").
 */
export function fNumber(n: number): string {
  positive(n, 'n');
  return `f/${Number(n.toPrecision(2))}`;
}

/** A sensitivity as a whole number: "ISO 400". */
export function isoSpeed(iso: number): string {
  positive(iso, 'iso');
  return `ISO ${Math.round(iso)}`;
}

/** An angle in words: a tenth below ten degrees ("1.5 degrees", "1 degree"), whole above ("12 degrees"). */
export function degrees(deg: number): string {
  finite(deg, 'deg');
  const text = Math.abs(deg) < 9.95 ? tenths(deg) : String(Math.round(deg));
  return `${text} ${text === '1' || text === '-1' ? 'degree' : 'degrees'}`;
}

/** A share (0..1) as whole per cent: "8 %". */
export function percent(share: number): string {
  finite(share, 'share');
  return `${Math.round(100 * share) || 0} %`;
}

/**
 * A pause as a person says it: "45 s", "12 min", "2 h 5 min", "3 days", "about 7 years". Frames
 * from different days or years (a card used on several trips) get days or years, never thousands
 * of hours.
 */
export function duration(seconds: number): string {
  if (typeof seconds !== 'number' || !Number.isFinite(seconds) || seconds < 0) return 'an unknown time';
  if (seconds < 90) return `${Math.round(seconds)} s`;
  const min = Math.round(seconds / 60);
  if (min < 90) return `${min} min`;
  const h = Math.floor(min / 60), rest = min - 60 * h;
  if (h < 48) return rest ? `${h} h ${rest} min` : `${h} h`;
  const days = Math.round(seconds / 86_400);
  if (days < 365) return `${days} days`;
  const years = Math.round(seconds / (365.25 * 86_400));
  return years === 1 ? 'about a year' : `about ${years} years`;
}
