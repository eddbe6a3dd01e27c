import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';

/**
 * Starts a worker thread from a module next to the caller, so that it works both from the compiled
 * `dist/` (`.js`) and from the TypeScript sources under tsx or vitest (`.ts`, loaded through tsx).
 */
export function startWorker(moduleUrl: URL, workerData: unknown): Worker {
  // Keeps a runaway sample from taking the whole machine's memory with it.
  const resourceLimits = { maxOldGenerationSizeMb: 512 };
  if (!moduleUrl.pathname.endsWith('.ts')) return new Worker(moduleUrl, { workerData, resourceLimits });
  // From sources: register tsx's loader inside the worker, then load the module (an `--import tsx`
  // in execArgv is not honoured by worker threads on every Node 20 release).
  const tsxApi = pathToFileURL(
    join(dirname(createRequire(import.meta.url).resolve('tsx/package.json')), 'dist/esm/api/index.mjs'),
  );
  const boot = `import(${JSON.stringify(tsxApi.href)}).then((api) => { api.register(); return import(${JSON.stringify(moduleUrl.href)}); });`;
  return new Worker(boot, { eval: true, workerData, resourceLimits });
}

/** The module URL of a sibling worker script, `.ts` under the sources and `.js` in `dist/`. */
export function siblingModule(callerUrl: string, baseName: string): URL {
  const ext = callerUrl.endsWith('.ts') ? '.ts' : '.js';
  return new URL(`./${baseName}${ext}`, callerUrl);
}

export interface PoolTask {
  id: number;
}

/**
 * A fixed set of worker threads fed from a queue. Each worker holds up to `inFlight` tasks so that it
 * never waits for the main thread between two of them. Replies arrive in completion order. A worker
 * that dies (not a task that throws: workers report those as results) fails the run.
 */
export class WorkerPool<T extends PoolTask, R extends { id: number }> {
  private workers: Worker[] = [];
  private stopped = false;

  constructor(
    private readonly moduleUrl: URL,
    private readonly size: number,
    private readonly workerData: unknown = undefined,
    private readonly inFlight = 2,
  ) {}

  /** Runs every task; `onReply` sees each reply as it arrives. Resolves when all are done or `stop()` was called. */
  run(tasks: T[], onReply: (reply: R) => void): Promise<void> {
    const queue = tasks.slice().reverse();
    let outstanding = tasks.length;
    return new Promise<void>((resolve, reject) => {
      let settled = false;
      const finish = (err?: Error) => {
        if (settled) return;
        settled = true;
        if (err) {
          this.stop();
          reject(err);
        } else resolve();
      };
      this.onStop = () => finish();
      if (outstanding === 0) return finish();
      const n = Math.max(1, Math.min(this.size, tasks.length));
      const feed = (w: Worker, busy: { count: number }) => {
        while (!this.stopped && busy.count < this.inFlight && queue.length) {
          w.postMessage(queue.pop());
          busy.count++;
        }
      };
      for (let k = 0; k < n; k++) {
        const w = startWorker(this.moduleUrl, this.workerData);
        const busy = { count: 0 };
        this.workers.push(w);
        w.on('message', (reply: R) => {
          busy.count--;
          outstanding--;
          if (this.stopped) return;
          try {
            onReply(reply);
          } catch (err) {
            return finish(err as Error);
          }
          if (outstanding === 0) return finish();
          feed(w, busy);
        });
        w.on('error', (err) => {
          if (!this.stopped) finish(err);
        });
        w.on('exit', (code) => {
          if (!this.stopped && outstanding > 0)
            finish(new Error(`a worker thread stopped with code ${code}`));
        });
        feed(w, busy);
      }
    });
  }

  private onStop: (() => void) | null = null;

  /** Stops handing out tasks and ends every worker now; a pending `run` resolves with what has arrived. */
  stop(): void {
    if (this.stopped) return;
    this.stopped = true;
    for (const w of this.workers) void w.terminate();
    this.onStop?.();
  }

  /** Ends the workers after a finished run. */
  async close(): Promise<void> {
    this.stopped = true;
    await Promise.all(this.workers.map((w) => w.terminate()));
    this.workers = [];
  }
}
