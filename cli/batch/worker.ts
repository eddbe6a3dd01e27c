/**
 * Worker thread of `lumirate batch`: reads a sample's files, hashes them, runs the fit and the physics,
 * and sends back the result as UTF-8 JSON (written here, in parallel, rather than on the main thread,
 * with compact curves: `writeSampleResult`), with the sample's curves block for the report when one is
 * written.
 * Parsed IRFs are kept per worker, keyed by path and content hash, since most batches share a few;
 * so are the texts of files read again unchanged (`inputFiles.ts`).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { AxisCache, writeFitCurves } from '../../shared/curvesJson.js';
import { JsonBytes } from '../../shared/jsonBytes.js';
import { scriptSafeJson, writePackedCurves } from '../../shared/reportHtml.js';
import type { FitCurves, SampleResult } from '../../shared/schema.js';
import { briefJson, resultTexts, writeSampleResult } from '../../src/batch/resultJson.js';
import {
  failedSample,
  runGroup,
  runSample,
  type HistogramCache,
  type RunContext,
  type SampleInputs,
} from '../../src/batch/runSample.js';
import { readInput } from './inputFiles.js';
import { taskOf, type PoolMessage } from './pool.js';
import { SpareBuffers, roomFor } from './spareBuffers.js';
import { briefOf, type MemberTask, type WorkReply, type WorkTask, type WorkerSetup } from './protocol.js';

const setup = workerData as WorkerSetup;
const cache: HistogramCache = new Map();

function readInputs(m: MemberTask): SampleInputs {
  const inputs: Partial<SampleInputs> = {};
  for (const f of m.files) inputs[f.role] = readInput(f);
  return inputs as SampleInputs;
}

function withoutCurves(r: SampleResult): SampleResult {
  return setup.curves ? r : briefOf(r);
}

function runTask(task: WorkTask): SampleResult[] {
  const ctx: RunContext = { lumirateVersion: setup.lumirateVersion, timeUtc: new Date().toISOString() };
  const fail = (m: MemberTask, err: unknown, inputs?: Partial<SampleInputs>) =>
    failedSample({ ...m.settings }, err, ctx, m.settings, inputs);
  if (task.kind === 'sample') {
    const m = task.members[0];
    let inputs: SampleInputs | undefined;
    try {
      inputs = readInputs(m);
      return [runSample(m.settings, inputs, ctx, cache)];
    } catch (err) {
      return [fail(m, err, inputs)];
    }
  }
  // A group: members whose files cannot be read fail alone; the rest are fitted together.
  const readable: { settings: MemberTask['settings']; inputs: SampleInputs }[] = [];
  const out = new Map<string, SampleResult>();
  for (const m of task.members) {
    try {
      readable.push({ settings: m.settings, inputs: readInputs(m) });
    } catch (err) {
      out.set(m.settings.sample, fail(m, err));
    }
  }
  if (readable.length > 0) {
    try {
      for (const r of runGroup(readable, ctx, cache)) out.set(r.sample, r);
    } catch (err) {
      const why = err instanceof Error ? err.message : String(err);
      for (const r of readable) {
        out.set(
          r.settings.sample,
          fail(
            { settings: r.settings, files: [] },
            new Error(`group '${r.settings.group}': ${why}`),
            r.inputs,
          ),
        );
      }
    }
  }
  return task.members.map((m) => out.get(m.settings.sample)!);
}

const out = new JsonBytes(1 << 18);
const axis = new AxisCache();

/** Shared buffers the batch's thread has handed back after using a reply, to write the next ones into. */
const spare = new SpareBuffers<SharedArrayBuffer>();

/**
 * What `out` holds, with a newline, in a shared buffer: the smallest spare one that fits, else a new
 * one with some room (the next sample's text is a little longer or shorter). A fresh buffer of 100 kB
 * per reply cost more than writing the text into it.
 *
 * Shared rather than transferred: transferring detaches a buffer, and the first detached buffer in a
 * thread makes the engine throw away every piece of optimised code that reads a typed array (compiled
 * on the assumption that none ever is) and compile it again with checks, the fitter's hottest loops
 * included. Copying instead cost the batch's thread a fifth more time.
 */
function lineToSend(): Uint8Array {
  const n = out.length + 1;
  const buffer = spare.take(n) ?? new SharedArrayBuffer(roomFor(n));
  const line = new Uint8Array(buffer, 0, n);
  line.set(out.view());
  line[n - 1] = 10;
  return line;
}

/** The report's curves block of a result, as one UTF-8 line. */
function reportCurves(r: SampleResult): Uint8Array | undefined {
  const c = r.fit?.curves;
  if (!setup.report || !c) return undefined;
  writePackedCurves(out.reset(), c);
  return lineToSend();
}

/**
 * Arrays made as the fitter makes its curves (`plotCurves`): held in the same kind of array, so that
 * code meeting these meets the same shapes as with real curves.
 */
function curveArray(values: (number | null)[]): (number | null)[] {
  const a = new Array<number | null>(values.length);
  for (let i = 0; i < values.length; i++) a[i] = values[i];
  return a;
}

/**
 * Runs the curve writers, a few times, on small made-up curves that take every path they have: a
 * masked channel, negative and zero values, a rounding that carries into the next power of ten, a
 * whole number longer than the digits kept, a value on a rounding tie, one below 1e-6. The engine
 * compiles the writers after their first few thousand values; compiled before they had met a path,
 * they were thrown away and compiled again when a sample took it, up to five times per thread.
 */
function primeCurveWriters(): void {
  const curves: FitCurves = {
    timeNs: curveArray([0, 0.0122, 0.0244, 0.0366, 0.0488, 0.061, 0.0732, 0.0854]) as number[],
    data: curveArray([0, 3, 17, 9999, 123456, 2 ** 31, 5, 0]) as number[],
    model: curveArray([null, 9.99999996, 99999.996, 12345.678, 1.2345, 3e-7, 0, 2.5]),
    irf: curveArray([0, 0.000123, 9999.99996, 4.5, 1, 0, 0, 0]) as number[],
    weightedResiduals: curveArray([null, -1.2345678, 0.9999996, 0, -0.0000001, 2.5, -3, 12.25]),
    autocorrelation: Array.from(Float64Array.of(1, -0.25, 0.0001, -0.9999996)),
    fitStartIndex: 1,
    fitEndIndex: 7,
  };
  const w = new JsonBytes(1 << 12);
  for (let k = 0; k < 20; k++) {
    writeFitCurves(w.reset(), curves);
    writePackedCurves(w.reset(), curves);
  }
}
primeCurveWriters();

parentPort!.on('message', (message: PoolMessage<WorkTask>) => {
  const task = taskOf(message, (buffers) => spare.give(...buffers));
  if (!task) return;
  const results = runTask(task).map(withoutCurves);
  const reply: WorkReply = {
    id: task.id,
    results: results.map((r) => {
      // The texts of the result's numbers serve both its line and its brief copy.
      const texts = resultTexts(r);
      writeSampleResult(out.reset(), r, axis, texts);
      const json = lineToSend();
      const curves = reportCurves(r);
      const brief = scriptSafeJson(briefJson(texts));
      return { json, briefJson: brief, ...(curves ? { reportCurves: curves } : {}) };
    }),
  };
  parentPort!.postMessage(reply);
});
