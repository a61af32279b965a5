// The part of autocannon 9's API the bench uses (the package ships no types of its own).
declare module 'autocannon' {
  import type { EventEmitter } from 'node:events';

  export interface AutocannonRequest {
    method?: string;
    path?: string;
    headers?: Record<string, string>;
    body?: string;
    setupRequest?: (req: AutocannonRequest, context: Record<string, unknown>) => AutocannonRequest;
  }

  export interface AutocannonOptions {
    url: string;
    connections?: number;
    duration?: number;
    amount?: number;
    timeout?: number;
    method?: string;
    headers?: Record<string, string>;
    body?: string;
    requests?: AutocannonRequest[];
  }

  export interface AutocannonResult {
    duration: number;
    errors: number;
    timeouts: number;
    non2xx: number;
    statusCodeStats: Record<string, { count: number }>;
    requests: { average: number; total: number; sent: number };
    throughput: { average: number; total: number };
    latency: { p50: number; p99: number; average: number; max: number };
  }

  /** Emits 'response' (client, statusCode, bytes, ms) per answer, and resolves with the summary. */
  export interface AutocannonInstance extends EventEmitter, PromiseLike<AutocannonResult> {
    stop(): void;
  }

  export default function autocannon(options: AutocannonOptions): AutocannonInstance;
}
