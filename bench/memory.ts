// Peak memory of a check against the length of the sequence (issue: memory follows the frames in
// flight, not the sequence): checks the first 24 and then all 201 frames of a 67-station bracketed
// sweep of 24 MP (6000x4000) JPEGs from the demo generator, cached in .bench-cache between runs,
// each check in its own process, and prints wall time and peak resident memory of both; then the
// first 99 frames (33 stations) checked as a sweep and with --all-pairs (target: under 4x the sweep).
import { defaultMaxSide } from '../src/main/check.js';
import { longSweep, longSweepPrefix } from './sequences.js';
import { checkInChild, decodeFloor, framesOf } from './whole-check.js';

const full = await longSweep();
const short = await longSweepPrefix(24);
const measure = (folder: string): { seconds: number; peakMiB: number; frames: number } => ({ ...checkInChild(folder), frames: framesOf(folder).length });

const floor = (await decodeFloor(short, defaultMaxSide)).seconds;
const a = measure(short);
const b = measure(full);
const hundred = await longSweepPrefix(99);
const sweep99 = measure(hundred);
const all99 = { ...checkInChild(hundred, ['--all-pairs']), frames: 99 };
console.log(`memory benchmark, ${new Date().toISOString().slice(0, 10)}, node ${process.version}`);
for (const m of [a, b]) console.log(`${String(m.frames).padStart(4)} frames of 24 MP: ${m.seconds.toFixed(1)} s, peak RSS ${m.peakMiB.toFixed(0)} MiB`);
console.log(`decode floor for the 24 frames: ${floor.toFixed(1)} s on one thread; check / floor = ${(a.seconds / floor).toFixed(2)} (target 0.7 or less)`);
console.log(`peak RSS ratio ${(b.peakMiB / a.peakMiB).toFixed(2)} for ${(b.frames / a.frames).toFixed(1)}x the frames (target: 200 frames under 1 GiB)`);
console.log(`99 frames: sweep check ${sweep99.seconds.toFixed(1)} s, --all-pairs ${all99.seconds.toFixed(1)} s (peak RSS ${all99.peakMiB.toFixed(0)} MiB): ratio ${(all99.seconds / sweep99.seconds).toFixed(2)} (target under 4)`);
