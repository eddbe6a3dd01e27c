import { describe, expect, it } from 'vitest';
import { WorkerPool } from '../../cli/batch/pool.js';

const squareWorker = new URL('./fixtures/squareWorker.ts', import.meta.url);

describe('WorkerPool', () => {
  it('runs every task once on several threads and returns every reply', async () => {
    const pool = new WorkerPool<{ id: number; n: number }, { id: number; value: number; thread: number }>(
      squareWorker,
      2,
    );
    const tasks = Array.from({ length: 40 }, (_, i) => ({ id: i, n: i }));
    const replies: { id: number; value: number; thread: number }[] = [];
    await pool.run(tasks, (r) => {
      replies.push(r);
    });
    await pool.close();
    expect(replies.map((r) => r.id).sort((a, b) => a - b)).toEqual(tasks.map((t) => t.id));
    for (const r of replies) expect(r.value).toBe(r.id * r.id);
    expect(new Set(replies.map((r) => r.thread)).size).toBe(2);
  });

  it('fails the run when a worker thread dies', async () => {
    const pool = new WorkerPool<{ id: number; n: number }, { id: number }>(squareWorker, 1);
    await expect(pool.run([{ id: 0, n: -1 }], () => {})).rejects.toThrow(
      'a worker thread stopped with code 7',
    );
    await pool.close();
  });

  it('stop() ends the run early, keeping the replies that arrived', async () => {
    const pool = new WorkerPool<{ id: number; n: number }, { id: number }>(squareWorker, 1, undefined, 1);
    const seen: number[] = [];
    await pool.run(
      Array.from({ length: 100 }, (_, i) => ({ id: i, n: i })),
      (r) => {
        seen.push(r.id);
        if (seen.length === 3) pool.stop();
      },
    );
    await pool.close();
    expect(seen).toEqual([0, 1, 2]);
  });

  it('runs on threads started ahead, and closes those the run did not need', async () => {
    const pool = new WorkerPool<{ id: number; n: number }, { id: number; thread: number }>(squareWorker, 3);
    pool.prestart(2);
    const threads = new Set<number>();
    await pool.run(
      Array.from({ length: 20 }, (_, i) => ({ id: i, n: i })),
      (r) => {
        threads.add(r.thread);
      },
    );
    // Two started ahead, a third started by the run itself.
    expect(threads.size).toBe(3);
    await pool.close();
    const idle = new WorkerPool(squareWorker, 2);
    idle.prestart();
    await idle.run([], () => {});
    // Would leave the test process waiting for the threads if they were not ended.
    await idle.close();
  });

  it('hands the buffers a reply returns back to the worker that sent it', async () => {
    const pool = new WorkerPool<
      { id: number; n: number },
      { id: number; buffer: SharedArrayBuffer; recycledBytes: number }
    >(squareWorker, 1, undefined, 1);
    const recycled: number[] = [];
    await pool.run(
      Array.from({ length: 5 }, (_, i) => ({ id: i, n: i })),
      (r) => {
        recycled.push(r.recycledBytes);
        return [r.buffer];
      },
    );
    await pool.close();
    // One task in flight: each reply is sent after the buffer of the one before came back.
    expect(recycled).toEqual([0, 8, 16, 24, 32]);
  });
});

describe('WorkerPool with onLost', () => {
  it('reports the task a dying worker was running, requeues the rest and finishes the run', async () => {
    const pool = new WorkerPool<{ id: number; n: number }, { id: number; value: number }>(squareWorker, 1);
    const tasks = [1, 2, -1, 3, 4].map((n, id) => ({ id, n }));
    const replies: number[] = [];
    const lost: { id: number; why: string }[] = [];
    await pool.run(
      tasks,
      (r) => {
        replies.push(r.id);
      },
      (t, why) => lost.push({ id: t.id, why }),
    );
    await pool.close();
    expect(lost).toEqual([{ id: 2, why: 'a worker thread stopped with code 7' }]);
    expect(replies.sort()).toEqual([0, 1, 3, 4]);
  });
});
