/**
 * How fast a large report opens: 500 samples with 4096-channel curves (invented fixture decays), written
 * with the real report writer, opened from disk in headless Chromium. Prints the file size, the time to
 * assemble and write it, and the time from navigation start until the table and the first sample's plots
 * are drawn (the page's own `__reportReady` mark), plus the time to switch samples. Figures only.
 */
import { mkdirSync, statSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeReport } from '../../cli/report.js';
import type { ReportData, SampleResult } from '../../shared/schema.js';
import { fixtureReport } from '../viewer/fixtures.js';
import { launchHeadless } from '../viewer/browser.js';

const SAMPLES = 500;
const CHANNELS = 4096;
const RUNS = 5;

const outDir = join(import.meta.dirname, '..', '..', 'test-output', 'bench');
mkdirSync(outDir, { recursive: true });
const path = join(outDir, 'viewer-500.html');

// Twenty distinct simulated decays, repeated under 500 names: the page's work and the file's size are
// those of 500 real samples, without simulating 500 of them here.
const base = fixtureReport({ samples: 20, channels: CHANNELS, failed: true });
const samples: SampleResult[] = [];
for (let i = 0; i < SAMPLES; i++) {
  const b = base.samples[i % base.samples.length];
  samples.push({
    ...b,
    sample: `bench-${String(i + 1).padStart(3, '0')}`,
    metadata: { ...b.metadata, run: String(i) },
  });
}
const data: ReportData = { ...base, title: `Benchmark: ${SAMPLES} samples × ${CHANNELS} channels`, samples };

let t = performance.now();
await writeReport(data, path); // includes building the page bundle when it is stale
const firstWriteMs = performance.now() - t;
t = performance.now();
await writeReport(data, path);
const writeMs = performance.now() - t;
const sizeMb = statSync(path).size / 1e6;

const chrome = await launchHeadless();
const readyMs: number[] = [];
const wallMs: number[] = [];
const switchMs: number[] = [];
const marks: Record<string, number[]> = {};
try {
  for (let run = 0; run < RUNS; run++) {
    const page = await chrome.browser.newPage({ viewport: { width: 1400, height: 1000 } });
    const start = performance.now();
    await page.goto(pathToFileURL(path).href, { waitUntil: 'commit' });
    await page.waitForFunction(() => window.__reportReady !== undefined, null, {
      timeout: 120_000,
      polling: 10,
    });
    wallMs.push(performance.now() - start);
    readyMs.push(await page.evaluate(() => window.__reportReady!));
    const m = await page.evaluate(() =>
      performance
        .getEntriesByType('mark')
        .map((e) => [e.name.replace('lumirate-', ''), e.startTime] as const),
    );
    for (const [name, at] of m) (marks[name] ??= []).push(at);
    // Switching: ten arrow-key steps, each parsing and drawing a new sample's curves.
    const s0 = await page.evaluate(() => performance.now());
    for (let k = 0; k < 10; k++) await page.keyboard.press('ArrowDown');
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => r(null))));
    switchMs.push(((await page.evaluate(() => performance.now())) - s0) / 10);
    await page.close();
  }
} finally {
  await chrome.close();
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const fmt = (xs: number[]) =>
  `median ${median(xs).toFixed(0)} ms (runs: ${xs.map((x) => x.toFixed(0)).join(', ')})`;
console.log(`report: ${SAMPLES} samples × ${CHANNELS} channels, ${sizeMb.toFixed(1)} MB`);
console.log(
  `assemble + write: ${writeMs.toFixed(0)} ms (first call, with bundle check: ${firstWriteMs.toFixed(0)} ms)`,
);
console.log(`open until table and first plots drawn (page clock from navigation start): ${fmt(readyMs)}`);
console.log(`open until ready (test driver wall clock): ${fmt(wallMs)}`);
console.log(
  `  of which (page clock, medians): ${Object.entries(marks)
    .map(([k, v]) => `${k} at ${median(v).toFixed(0)} ms`)
    .join(', ')}`,
);
console.log(`switch to the next sample (arrow key, parse + draw): ${fmt(switchMs)}`);
console.log(`goal: under 2000 ms to open`);
// Timings on a shared machine mean little without its load.
console.log(
  `machine: ${availableParallelism()} cores, load average ${loadavg()
    .map((x) => x.toFixed(1))
    .join(' / ')} (1 / 5 / 15 min)`,
);
