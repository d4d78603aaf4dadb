// The part of autocannon's API that bench-load.ts uses (the package ships no types).
declare module 'autocannon' {
  namespace autocannon {
    interface Options {
      url: string;
      connections?: number;
      duration?: number;
      overallRate?: number;
      headers?: Record<string, string>;
      requests?: {
        setupRequest?: (req: Record<string, unknown>, context: Record<string, unknown>) => Record<string, unknown>;
        onResponse?: (status: number, body: string, context: Record<string, unknown>) => void;
      }[];
    }
    interface Result {
      duration: number;
      requests: { total: number };
      non2xx: number;
      errors: number;
      timeouts: number;
    }
    interface Instance extends PromiseLike<Result> {
      on(event: 'response', listener: (client: unknown, statusCode: number, resBytes: number, responseTime: number) => void): this;
    }
  }
  function autocannon(options: autocannon.Options): autocannon.Instance;
  export default autocannon;
}
