/**
 * Whether the service is there: a health check every few seconds, and at once whenever a
 * request or a job's event stream finds no service. One failed check says "down" (a refused
 * or timed-out `GET /api/health` on loopback is not a blip); while down it checks more often
 * and says "up" again at the first answer. The clock and the check are injected, so the
 * rules are tested without a browser or a timer.
 *
 * @module
 */

/** What the page knows about the service. */
export type ServiceState = "unknown" | "up" | "down";

/** Options of {@link HealthMonitor}. */
export interface HealthMonitorOptions {
  /** Resolves true when the service answers its health check (must time out by itself). */
  check: () => Promise<boolean>;
  /** Told of every change of state. */
  onChange: (state: ServiceState, previous: ServiceState) => void;
  /** Interval between checks while up, ms (default 5000). */
  upIntervalMs?: number;
  /** Interval between checks while down, ms (default 2000). */
  downIntervalMs?: number;
  /** Timer functions (default the global ones). */
  setTimer?: (run: () => void, ms: number) => number;
  clearTimer?: (id: number) => void;
}

/** Watches the service's health; see the module comment for the rules. */
export class HealthMonitor {
  #state: ServiceState = "unknown";
  #timer: number | undefined;
  #checking: Promise<void> | null = null;
  #stopped = false;
  readonly #options: Required<HealthMonitorOptions>;

  constructor(options: HealthMonitorOptions) {
    this.#options = {
      upIntervalMs: 5000,
      downIntervalMs: 2000,
      setTimer: (run, ms) => setTimeout(run, ms) as unknown as number,
      clearTimer: (id) => clearTimeout(id),
      ...options,
    };
  }

  /** The state after the latest check. */
  get state(): ServiceState {
    return this.#state;
  }

  /** Check now (coalesced with a check in flight), then keep checking on the interval. */
  checkNow(): Promise<void> {
    if (this.#stopped) return Promise.resolve();
    if (this.#checking) return this.#checking;
    if (this.#timer !== undefined) this.#options.clearTimer(this.#timer);
    this.#timer = undefined;
    this.#checking = (async () => {
      let ok = false;
      try {
        ok = await this.#options.check();
      } catch {
        ok = false;
      }
      this.#checking = null;
      this.#set(ok ? "up" : "down");
      this.#schedule();
    })();
    return this.#checking;
  }

  /** Something found no service: check at once. */
  suspect(): void {
    void this.checkNow();
  }

  /** Stop checking. */
  stop(): void {
    this.#stopped = true;
    if (this.#timer !== undefined) this.#options.clearTimer(this.#timer);
    this.#timer = undefined;
  }

  #set(next: ServiceState) {
    const previous = this.#state;
    this.#state = next;
    if (next !== previous) this.#options.onChange(next, previous);
  }

  #schedule() {
    if (this.#stopped) return;
    const ms = this.#state === "down" ? this.#options.downIntervalMs : this.#options.upIntervalMs;
    this.#timer = this.#options.setTimer(() => {
      this.#timer = undefined;
      void this.checkNow();
    }, ms);
  }
}
