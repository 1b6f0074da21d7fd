/**
 * Timestep respacing of the pixel-model code (Nichol & Dhariwal 2021, improved-diffusion and
 * guided-diffusion, respace.py space_timesteps): which of the T training steps a respaced sampler
 * keeps, from a string such as "ddim50", "250" or "10,15,20".
 *
 * - "ddimN": the first integer stride i in 1..T-1 whose range(0, T, i) has exactly N members
 *   (ceil(T / i) = N); no such stride is an error. The kept steps start at 0, so the noisiest is
 *   (N - 1) * i, which is T - 1 only when i divides T - 1 exactly.
 * - "a,b,c": T is cut into as many equal sections as there are counts (T // k steps each, the first
 *   T % k sections one longer); section j keeps count_j steps spaced by (size - 1) / (count - 1)
 *   from its start (stride 1 for a count of 1), each at start + round(x) with x accumulated by
 *   repeated float addition and rounded half to even as Python's round does. A count larger than
 *   its section is an error. A single count ("250") is one section over all of T.
 *
 * Checked against the stored source of openai/improved-diffusion (improved_diffusion/respace.py).
 * Returns the kept steps noisiest first.
 */
import { checkTrainSteps, fail, ok, type MathResult } from './guards';
import { roundHalfEven } from './numeric';

/** Longest respacing string read (a longer one is refused rather than parsed). */
const MAX_SPEC_LENGTH = 10_000;

/** Python's int() on a decimal text: surrounding white space, a sign and `_` between digits. */
function pythonInt(text: string): number | null {
  const s = text.trim();
  if (!/^[-+]?[0-9](_?[0-9])*$/.test(s)) return null;
  const n = Number(s.replace(/_/g, ''));
  return Number.isSafeInteger(n) ? n : null;
}

export function respacedTimesteps(T: number, spec: string): MathResult<number[]> {
  const badT = checkTrainSteps(T);
  if (badT !== null) return fail(badT);
  if (spec.length > MAX_SPEC_LENGTH) return fail(`the respacing string is longer than ${MAX_SPEC_LENGTH} characters`);
  if (spec.startsWith('ddim')) {
    const N = pythonInt(spec.slice(4));
    if (N === null) return fail(`"${spec}": the part after "ddim" must be a whole number`);
    for (let i = 1; i < T; i++) {
      if (Math.ceil(T / i) !== N) continue;
      const out: number[] = [];
      for (let t = Math.floor((T - 1) / i) * i; t >= 0; t -= i) out.push(t);
      return ok(out);
    }
    return fail(`"${spec}": no integer stride gives exactly ${N} steps out of ${T}`);
  }
  const parts = spec.split(',');
  const counts: number[] = [];
  for (const part of parts) {
    const n = pythonInt(part);
    if (n === null) return fail(`"${spec}": "${part}" is not a whole number`);
    counts.push(n);
  }
  const sizePer = Math.floor(T / counts.length);
  const extra = T % counts.length;
  const kept = new Set<number>();
  let start = 0;
  for (let j = 0; j < counts.length; j++) {
    const size = sizePer + (j < extra ? 1 : 0);
    const count = counts[j]!;
    if (size < count) return fail(`"${spec}": a section of ${size} steps cannot be divided into ${count}`);
    const stride = count <= 1 ? 1 : (size - 1) / (count - 1);
    let x = 0;
    for (let k = 0; k < count; k++) {
      kept.add(start + roundHalfEven(x));
      x += stride;
    }
    start += size;
  }
  if (kept.size === 0) return fail(`"${spec}" keeps no timestep`);
  return ok([...kept].sort((a, b) => b - a));
}
