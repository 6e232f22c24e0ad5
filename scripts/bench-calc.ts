// `npm run bench:calc`: the measurement engine's speed, on this machine. Prints figures, asserts nothing.
// 1. A 20-reading result by the GUM path (every component near-normal, no Monte Carlo): goal ≤ 1 ms.
// 2. 10⁶ Monte Carlo trials (JCGM 101:2008) of a 20-reading result on the server (Node): goal ≤ 1 s.
// 3. The same 10⁶ trials in headless Chromium through the calculator's own Web Worker, with the
//    page's main thread sampled every 10 ms meanwhile (its longest gap shows whether it blocked): goal ≤ 2 s.
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { build } from 'vite';
import { computeCalc } from '../shared/measure/calc';
import { repoRoot } from './lib/bootstrap';
import { launchBrowser } from './lib/chromium';

const TRIALS = 1_000_000;

/** A 20-reading signed sum: each reading has a stated normal uncertainty that outweighs its resolution. */
function twentyReadings(shift: number) {
  const readings: Record<string, unknown> = {};
  const terms: { reading: string; sign: 1 | -1 }[] = [];
  for (let i = 0; i < 20; i += 1) {
    const key = `r${i}`;
    readings[key] = { kind: 'direct', value: (14.3 + i * 0.0101 + shift * 1e-6).toFixed(6), unit: 'mm', resolution: '0.001', uncertainty: '0.002' };
    terms.push({ reading: key, sign: i % 2 === 0 ? 1 : -1 });
  }
  return { readings, terms, spec: { min: -0.2, max: 0.2, unit: 'mm' } };
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)]!;
}

function gumPath() {
  // Each request differs in its last digit, so the engine's memo never answers.
  for (let i = 0; i < 200; i += 1) computeCalc(twentyReadings(i)); // warm-up
  const times: number[] = [];
  let method = '';
  for (let i = 0; i < 2000; i += 1) {
    const body = twentyReadings(1000 + i);
    const t0 = performance.now();
    method = computeCalc(body).method;
    times.push(performance.now() - t0);
  }
  console.log(`GUM path, 20 readings: median ${median(times).toFixed(3)} ms, p95 ${times.sort((a, b) => a - b)[Math.floor(times.length * 0.95)]!.toFixed(3)} ms over ${times.length} requests (method ${method}); goal ≤ 1 ms`);
}

function serverMonteCarlo() {
  const times: number[] = [];
  let trials = 0;
  for (let i = 0; i < 3; i += 1) {
    const t0 = performance.now();
    trials = computeCalc(twentyReadings(5000 + i), { trials: TRIALS, forceMonteCarlo: true }).trials ?? 0;
    times.push(performance.now() - t0);
  }
  console.log(`Monte Carlo on the server: ${trials.toLocaleString('en-US')} trials of a 20-reading result, median ${median(times).toFixed(0)} ms of 3 runs (${times.map((t) => t.toFixed(0)).join(', ')} ms); goal ≤ 1000 ms`);
}

async function browserMonteCarlo() {
  const work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-bench-calc-'));
  try {
    fs.writeFileSync(path.join(work, 'index.html'), '<!doctype html><meta charset="utf-8"><title>bench</title><script type="module" src="./main.ts"></script>');
    fs.writeFileSync(
      path.join(work, 'main.ts'),
      `import { CalcWorkerRunner } from '@/features/calc/lib/run-calc-in-worker';
const runner = new CalcWorkerRunner();
(window as unknown as { bench: unknown }).bench = async (input: unknown, trials: number) => {
  let last = performance.now();
  let maxGap = 0;
  let ticks = 0;
  const timer = setInterval(() => { const now = performance.now(); maxGap = Math.max(maxGap, now - last); last = now; ticks += 1; }, 10);
  const t0 = performance.now();
  const outcome = await runner.run(input, { trials, forceMonteCarlo: true });
  const ms = performance.now() - t0;
  clearInterval(timer);
  return { ms, maxGap, ticks, outcome: JSON.parse(JSON.stringify(outcome)) };
};
(window as unknown as { ready: boolean }).ready = true;
`,
    );
    const outDir = path.join(work, 'dist');
    await build({
      root: work,
      configFile: false,
      logLevel: 'warn',
      resolve: { alias: { '@shared': path.join(repoRoot, 'shared'), '@': path.join(repoRoot, 'src') } },
      build: { outDir, emptyOutDir: true },
      worker: { format: 'es' },
    });
    const types: Record<string, string> = { '.html': 'text/html', '.js': 'text/javascript', '.css': 'text/css' };
    const server = http.createServer((req, res) => {
      const url = new URL(req.url ?? '/', 'http://x');
      const file = path.join(outDir, url.pathname === '/' ? 'index.html' : decodeURIComponent(url.pathname));
      if (!file.startsWith(outDir) || !fs.existsSync(file)) {
        res.writeHead(404).end();
        return;
      }
      res.writeHead(200, { 'Content-Type': types[path.extname(file)] ?? 'application/octet-stream' });
      fs.createReadStream(file).pipe(res);
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    const { port } = server.address() as AddressInfo;
    const browser = await launchBrowser();
    try {
      const page = await browser.newPage();
      await page.goto(`http://127.0.0.1:${port}/`);
      await page.waitForFunction(() => (window as unknown as { ready?: boolean }).ready === true);
      const results: { ms: number; maxGap: number; ticks: number; trials: number }[] = [];
      for (let i = 0; i < 3; i += 1) {
        const r = await page.evaluate(
          ([input, trials]) => (window as unknown as { bench: (i: unknown, t: number) => Promise<{ ms: number; maxGap: number; ticks: number; outcome: { response?: { trials: number | null } } }> }).bench(input, trials as number),
          [twentyReadings(9000 + i), TRIALS] as const,
        );
        results.push({ ms: r.ms, maxGap: r.maxGap, ticks: r.ticks, trials: r.outcome.response?.trials ?? 0 });
      }
      console.log(
        `Monte Carlo in Chromium's worker: ${results[0]!.trials.toLocaleString('en-US')} trials, median ${median(results.map((r) => r.ms)).toFixed(0)} ms of 3 runs (${results
          .map((r) => r.ms.toFixed(0))
          .join(', ')} ms); the page's 10 ms timer kept running, longest gap ${Math.max(...results.map((r) => r.maxGap)).toFixed(0)} ms; goal ≤ 2000 ms without blocking`,
      );
    } finally {
      await browser.dispose();
      server.close();
    }
  } finally {
    fs.rmSync(work, { recursive: true, force: true });
  }
}

console.log(`bench:calc on ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'cpu'}, Node ${process.version}`);
gumPath();
serverMonteCarlo();
await browserMonteCarlo();
