/**
 * The load bench's client (bench/load.ts), in a process of its own: autocannon 9.0.0 runs here, so
 * its latencies are not stretched by the garbage collection of the bench process (which holds the
 * other sections' data) nor by its other work. Started with `fork`; each message is one run:
 *
 *   parent → child  { id, opts: autocannon.Options, seconds }
 *   child → parent  { id, res: autocannon.Result, answers, wallS } or { id, error }
 *
 * A run is bounded by `opts.amount` requests and `seconds` seconds, whichever comes first.
 * autocannon's own duration is in whole sample intervals, so the rate is taken from the wall time
 * of the first request to the last answer instead (`wallS`, with the answers counted here).
 */
import autocannon from 'autocannon';

export interface ClientRun {
  id: number;
  opts: autocannon.Options;
  seconds: number;
}

export type ClientAnswer =
  | { id: number; res: autocannon.Result; answers: number; wallS: number }
  | { id: number; error: string };

export function cannon(
  opts: autocannon.Options,
  seconds: number,
): Promise<{ res: autocannon.Result; answers: number; wallS: number }> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    let last = t0;
    let answers = 0;
    const inst = autocannon({ sampleInt: 100, ...opts }, (err, res) => {
      clearTimeout(timer);
      if (err) reject(err);
      else resolve({ res, answers, wallS: Math.max(1e-3, (last - t0) / 1000) });
    });
    inst.on('response', () => {
      answers++;
      last = performance.now();
    });
    const timer = setTimeout(() => inst.stop(), seconds * 1000);
  });
}

if (process.send) {
  process.on('message', (m: ClientRun) => {
    cannon(m.opts, m.seconds).then(
      (r) => process.send!({ id: m.id, ...r } satisfies ClientAnswer),
      (e: unknown) => process.send!({ id: m.id, error: String(e) } satisfies ClientAnswer),
    );
  });
  process.on('disconnect', () => process.exit(0));
}
