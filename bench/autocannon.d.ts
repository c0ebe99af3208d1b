// The part of autocannon 9's API the load benchmark uses (the package ships no types).
declare module "autocannon" {
  interface Options {
    url: string;
    method?: string;
    headers?: Record<string, string>;
    body?: string;
    connections?: number;
    duration?: number;
    /** Stop after this many requests in all (instead of a duration). */
    amount?: number;
    /** Seconds before a request counts as timed out (default 10). */
    timeout?: number;
  }
  interface Histogram {
    p50: number;
    p97_5: number;
    p99: number;
    average: number;
  }
  interface Result {
    latency: Histogram;
    requests: Histogram;
    throughput: Histogram & { total: number };
    errors: number;
    timeouts: number;
    non2xx: number;
    statusCodeStats?: Record<string, { count: number }>;
  }
  interface Instance extends PromiseLike<Result> {
    on(event: "response", listener: (client: unknown, statusCode: number, resBytes: number, responseTime: number) => void): this;
  }
  function autocannon(options: Options): Instance;
  export default autocannon;
}
