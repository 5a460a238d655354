/** The background-job registry behind the import progress view (src/web/jobs.ts). */
import { describe, expect, it } from 'vitest';
import { createJobRegistry } from '../../src/web/jobs.ts';

/** A promise and the function that settles it, so a test decides when work finishes. */
function gate<T = void>() {
  let open!: (v: T) => void;
  const p = new Promise<T>((r) => {
    open = r;
  });
  return { p, open };
}

describe('job registry', () => {
  it('returns the job queued at once, runs it, reports progress and keeps the result', async () => {
    const reg = createJobRegistry<{ rows: number }, string>();
    const g = gate();
    const job = reg.start({ rows: 0 }, async (update) => {
      update({ rows: 5 });
      await g.p;
      update({ rows: 9 });
      return 'report';
    });
    expect(job.state).toBe('queued');
    expect(job.id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    await Promise.resolve();
    await Promise.resolve();
    expect(reg.get(job.id)?.state).toBe('running');
    expect(reg.get(job.id)?.progress.rows).toBe(5);
    g.open();
    await reg.idle();
    expect(reg.get(job.id)).toMatchObject({
      state: 'done',
      result: 'report',
      progress: { rows: 9 },
      error: null,
    });
  });

  it('runs jobs one at a time, in the order they were started', async () => {
    const reg = createJobRegistry<object, number>();
    const events: string[] = [];
    const g1 = gate();
    reg.start({}, async () => {
      events.push('1 start');
      await g1.p;
      events.push('1 end');
      return 1;
    });
    const second = reg.start({}, async () => {
      events.push('2 start');
      return 2;
    });
    await new Promise((r) => setTimeout(r, 10));
    expect(events).toEqual(['1 start']);
    expect(second.state).toBe('queued');
    g1.open();
    await reg.idle();
    expect(events).toEqual(['1 start', '1 end', '2 start']);
  });

  it('marks a job that threw as failed with a message for people, logs the stack, and goes on with the next', async () => {
    const lines: string[] = [];
    const reg = createJobRegistry<object, number>({ log: (l) => lines.push(l) });
    const bad = reg.start({}, async () => {
      throw new TypeError('secret internals at parse.ts:12');
    });
    const good = reg.start({}, async () => 7);
    await reg.idle();
    expect(bad.state).toBe('failed');
    expect(bad.error).toBe('The job stopped with an internal error. The details are in the server log.');
    expect(bad.error).not.toContain('parse.ts');
    expect(lines.join('\n')).toContain('secret internals at parse.ts:12');
    expect(good.result).toBe(7);
  });

  it('forgets a finished job once its time to live has passed, never a running one', async () => {
    let t = 1_000_000;
    const reg = createJobRegistry<object, number>({ ttlMs: 60_000, now: () => t });
    const done = reg.start({}, async () => 1);
    await reg.idle();
    const g = gate();
    const running = reg.start({}, async () => {
      await g.p;
      return 2;
    });
    await new Promise((r) => setTimeout(r, 0));
    t += 59_999;
    expect(reg.get(done.id)).toBeDefined();
    t += 1;
    expect(reg.get(done.id)).toBeUndefined();
    t += 10 * 60_000;
    expect(reg.get(running.id)?.state).toBe('running');
    g.open();
    await reg.idle();
    expect(reg.get(running.id)?.state).toBe('done');
    expect(reg.get('no-such-id')).toBeUndefined();
  });

  it('keeps at most maxJobs finished jobs, dropping the oldest', async () => {
    let t = 0;
    const reg = createJobRegistry<object, number>({ maxJobs: 3, now: () => t++ });
    const ids: string[] = [];
    for (let i = 0; i < 5; i++) {
      ids.push(reg.start({}, async () => i).id);
      await reg.idle();
    }
    expect(reg.list().map((j) => j.id)).toEqual(ids.slice(2).reverse());
  });
});
