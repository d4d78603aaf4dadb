// npm run bench:fit — four-parameter logistic fitting speed on one simulated 384-well plate:
// 32 samples × 11 concentrations (half-log, 10 µM down to 0.1 nM) in duplicate = 704 wells, with
// seeded Gaussian noise (SD 5 % of the window) and a mix of complete, partial and inactive curves,
// some increasing and some decreasing. No database. The plate is fitted once to warm up, then
// 5 timed runs; bar: the median plate time ≤ 1000 ms.
import { performance } from 'node:perf_hooks';
import { fitFourPL, fourPL, type CurvePoint, type FourPlFit } from '../../api/src/domain/curve-fit.js';
import { mulberry32 } from '../seeded-random.js';

const BAR_MS = 1000;
const RUNS = 5;
const CONCENTRATIONS = Array.from({ length: 11 }, (_, i) => -10 + i * 0.5);


const uniform = mulberry32(384);
const between = (lo: number, hi: number) => lo + (hi - lo) * uniform();
const gauss = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());

type Kind = 'full' | 'partial' | 'inactive';
interface Sample {
  id: string;
  kind: Kind;
  truth: { bottom: number; top: number; logEC50: number; hillSlope: number };
  points: CurvePoint[];
}

function simulate(index: number): Sample {
  const kind: Kind = index < 20 ? 'full' : index < 26 ? 'partial' : 'inactive';
  const decreasing = index % 3 === 2;
  const window = between(80, 110);
  const base = between(-5, 10);
  const slope = between(0.7, 1.8) * (decreasing ? -1 : 1);
  const logEC50 = kind === 'full' ? between(-8.8, -6.2) : kind === 'partial' ? between(-5.6, -4) : -1;
  const truth = { bottom: base, top: base + window, logEC50, hillSlope: slope };
  const points = CONCENTRATIONS.flatMap((logConc) =>
    [0, 1].map(() => ({ logConc, response: fourPL(logConc, truth) + 0.05 * window * gauss() })),
  );
  return { id: `S${String(index + 1).padStart(2, '0')}`, kind, truth, points };
}

const plate = Array.from({ length: 32 }, (_, i) => simulate(i));
const wells = plate.reduce((s, sample) => s + sample.points.length, 0);

function fitPlate(): FourPlFit[] {
  return plate.map((sample) => fitFourPL(sample.points));
}

fitPlate(); // warm-up
const times: number[] = [];
let fits: FourPlFit[] = [];
for (let run = 0; run < RUNS; run++) {
  const start = performance.now();
  fits = fitPlate();
  times.push(performance.now() - start);
}
const sorted = [...times].sort((a, b) => a - b);
const median = sorted[Math.floor(RUNS / 2)];
const total = times.reduce((s, t) => s + t, 0);

const pad = (s: string, n: number) => s.padEnd(n);
console.log(`${pad('sample', 7)}${pad('kind', 10)}${pad('true logEC50', 14)}${pad('reported', 12)}${pad('nH', 7)}${pad('R²', 7)}flags`);
plate.forEach((sample, i) => {
  const f = fits[i];
  const reported = Number.isFinite(f.potency.logValue) ? `${f.potency.qualifier} ${f.potency.logValue.toFixed(2)}` : '—';
  console.log(
    pad(sample.id, 7) +
      pad(sample.kind, 10) +
      pad(sample.kind === 'inactive' ? '— (none)' : sample.truth.logEC50.toFixed(2), 14) +
      pad(reported, 12) +
      pad(f.ok ? f.params.hillSlope.value.toFixed(2) : '—', 7) +
      pad(f.rSquared.toFixed(3), 7) +
      (f.flags.join(', ') || '—'),
  );
});
console.log('');
console.log(`plate: ${plate.length} samples, ${wells} wells; ${RUNS} timed runs after one warm-up`);
console.log(`runs (ms): ${times.map((t) => t.toFixed(1)).join(', ')}`);
console.log(`median plate time: ${median.toFixed(1)} ms (${(median / plate.length).toFixed(2)} ms per curve); total of ${RUNS} runs: ${total.toFixed(1)} ms`);
console.log(`bar (median ≤ ${BAR_MS} ms per plate): ${median <= BAR_MS ? 'met' : 'NOT met'}`);
process.exitCode = median <= BAR_MS ? 0 : 1;
