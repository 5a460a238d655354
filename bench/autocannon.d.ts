/** The part of autocannon 9.0.0's API that bench/load.ts uses (the package ships no types). */
declare module 'autocannon' {
  namespace autocannon {
    interface Options {
      url: string;
      connections?: number;
      amount?: number;
      duration?: number;
      maxOverallRequests?: number;
      headers?: Record<string, string>;
      timeout?: number;
      sampleInt?: number;
    }
    interface Histogram {
      average: number;
      p50: number;
      p99: number;
      total: number;
    }
    interface Instance {
      on(event: 'response', listener: () => void): Instance;
      stop(): void;
    }
    interface Result {
      duration: number;
      errors: number;
      timeouts: number;
      non2xx: number;
      latency: Histogram;
      requests: Histogram;
      throughput: Histogram;
    }
  }
  function autocannon(
    opts: autocannon.Options,
    cb: (err: Error | null, res: autocannon.Result) => void,
  ): autocannon.Instance;
  export default autocannon;
}
