import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';

/**
 * Starts a worker thread from a module next to the caller, so that it works both from the compiled
 * `dist/` (`.js`) and from the TypeScript sources under tsx or vitest (`.ts`, loaded through tsx).
 */
export function startWorker(moduleUrl: URL, workerData: unknown): Worker {
  // The old-generation cap keeps a runaway sample from taking the whole machine's memory with it.
  // The young generation is kept small (semi-spaces of 4 MB rather than growing to 16 MB): a fit's
  // short-lived arrays then stay in the processor's cache, and a batch of 4096-channel decays ran
  // ~5 % faster in a third less memory, although the collector runs more often.
  const resourceLimits = { maxOldGenerationSizeMb: 512, maxYoungGenerationSizeMb: 12 };
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
 * Shared buffers handed back to a worker once its reply has been used (see `WorkerPool.run`), with the
 * next task when there is one (one message rather than two). Shared, not transferred: the worker and
 * this thread both see them, and neither ever detaches one.
 */
export interface RecycleMessage<T = unknown> {
  recycle: SharedArrayBuffer[];
  task?: T;
}

/** What a pool's worker receives: a task, or buffers handed back (see `RecycleMessage`), with or without one. */
export type PoolMessage<T> = T | RecycleMessage<T>;

/** The task a pool's message carries, if any, after handing its buffers (if any) to `keep`. */
export function taskOf<T extends PoolTask>(
  message: PoolMessage<T>,
  keep: (buffers: SharedArrayBuffer[]) => void,
): T | undefined {
  if (!('recycle' in message)) return message;
  keep(message.recycle);
  return message.task;
}

/**
 * A fixed set of worker threads fed from a queue. Each worker holds up to `inFlight` tasks so that it
 * never waits for the main thread between two of them. Replies arrive in completion order.
 *
 * A worker that dies (out of memory, a crash in native code; a task that throws is reported by the
 * worker itself as a result) loses the task it was running: the oldest one it had not answered, since
 * a worker runs its tasks in the order received. With `onLost`, that task is reported there, the
 * worker's other tasks go back to the queue and a fresh worker takes its place, so one pathological
 * sample cannot stop a batch. Without `onLost`, the run fails.
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

  /**
   * Runs every task; `onReply` sees each reply as it arrives, and may return shared buffers of the
   * reply that it no longer needs, to hand back to the worker that sent it (as `{ recycle: buffers }`)
   * for writing its next replies into. Resolves when all are done or `stop()` was called.
   */
  run(
    tasks: T[],
    onReply: (reply: R) => SharedArrayBuffer[] | void,
    onLost?: (task: T, why: string) => void,
  ): Promise<void> {
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
      const spawnOne = () => {
        const w = this.takeStarted() ?? startWorker(this.moduleUrl, this.workerData);
        const pending: T[] = [];
        let dead = false;
        this.workers.push(w);
        // Buffers handed back go with the first task sent, or alone when none is.
        const feed = (back?: SharedArrayBuffer[]) => {
          while (!this.stopped && pending.length < this.inFlight && queue.length) {
            const task = queue.pop()!;
            pending.push(task);
            if (back) w.postMessage({ recycle: back, task } satisfies RecycleMessage<T>);
            else w.postMessage(task);
            back = undefined;
          }
          if (back && !this.stopped) w.postMessage({ recycle: back } satisfies RecycleMessage<T>);
        };
        const lost = (why: string) => {
          if (dead || this.stopped) return;
          dead = true;
          this.workers = this.workers.filter((x) => x !== w);
          if (pending.length === 0) return;
          if (!onLost) return finish(new Error(why));
          const [running, ...rest] = pending;
          for (const t of rest.reverse()) queue.push(t);
          outstanding--;
          try {
            onLost(running, why);
          } catch (err) {
            return finish(err as Error);
          }
          if (outstanding === 0) return finish();
          if (queue.length) spawnOne();
        };
        w.on('message', (reply: R) => {
          const at = pending.findIndex((t) => t.id === reply.id);
          if (at >= 0) pending.splice(at, 1);
          outstanding--;
          if (this.stopped) return;
          let back: SharedArrayBuffer[] | void;
          try {
            back = onReply(reply);
          } catch (err) {
            return finish(err as Error);
          }
          if (outstanding === 0) return finish();
          if (!dead) feed(back && back.length ? back : undefined);
        });
        w.on('error', (err) => lost(`the worker running it failed: ${err.message}`));
        w.on('exit', (code) => lost(`a worker thread stopped with code ${code}`));
        feed();
      };
      for (let k = 0; k < Math.max(1, Math.min(this.size, tasks.length)); k++) spawnOne();
    });
  }

  private onStop: (() => void) | null = null;

  private closing: Promise<void> = Promise.resolve();

  /** Threads started ahead of `run`, still loading or waiting for it. */
  private started: Worker[] = [];

  /**
   * Starts the worker threads now, so that they load their modules while the caller still prepares
   * the tasks (a thread takes 0.1–0.2 s to be ready): `count` of them, at most the pool's size. `run`
   * uses them; `close` ends any left over.
   */
  prestart(count = this.size): void {
    while (this.started.length < Math.min(count, this.size)) {
      const w = startWorker(this.moduleUrl, this.workerData);
      // One that fails before `run` takes it is dropped, and `run` starts another.
      const drop = () => {
        this.started = this.started.filter((x) => x !== w);
      };
      w.once('error', drop);
      w.once('exit', drop);
      this.started.push(w);
    }
  }

  private takeStarted(): Worker | undefined {
    const w = this.started.pop();
    w?.removeAllListeners('error').removeAllListeners('exit');
    return w;
  }

  /** Stops handing out tasks and ends every worker now; a pending `run` resolves with what has arrived. */
  stop(): void {
    if (this.stopped) return;
    this.stopped = true;
    for (const w of [...this.workers, ...this.started]) void w.terminate();
    this.onStop?.();
  }

  /** Ends the workers after a finished run. */
  close(): Promise<void> {
    this.stopped = true;
    const ending = [...this.workers, ...this.started].map((w) => w.terminate());
    this.workers = [];
    this.started = [];
    // A second call waits for the same threads.
    this.closing = Promise.all([this.closing, ...ending]).then(() => undefined);
    return this.closing;
  }
}
