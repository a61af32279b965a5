import type { Config } from '../config/env';

/**
 * Whether this server process is shutting down. Once draining, readiness answers 503 (the balancer
 * sends no new requests) and long-lived answers such as event streams are ended by the hooks they
 * registered, so the process can finish what is in flight and exit.
 */
export class DrainState {
  private on = false;
  private readonly hooks = new Set<() => void>();

  get draining() {
    return this.on;
  }

  /** Runs `fn` when draining starts (at once if it has); returns a function that unregisters it. */
  onDrain(fn: () => void): () => void {
    if (this.on) {
      fn();
      return () => undefined;
    }
    this.hooks.add(fn);
    return () => this.hooks.delete(fn);
  }

  start() {
    if (this.on) return;
    this.on = true;
    for (const fn of [...this.hooks]) fn();
    this.hooks.clear();
  }
}

const states = new WeakMap<Config, DrainState>();

/** The drain state of the server process running with this configuration. */
export function drainState(config: Config): DrainState {
  let state = states.get(config);
  if (!state) {
    state = new DrainState();
    states.set(config, state);
  }
  return state;
}
