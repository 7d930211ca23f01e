import type { SimulateReply, SimulateRequestOptions } from "./simulate_request.ts";

const WORKER = new URL("./_simulate_worker.ts", import.meta.url).href;

/** Options of {@link SimulatePool}. */
export interface SimulatePoolOptions {
  /** Requests that may wait for a worker; more get 429 (default 64). */
  maxWaiting?: number;
  /** Longest a request waits for a free worker, ms; then 503 (default 30 000). */
  queueTimeoutMs?: number;
  /**
   * How long past its own time budget a simulation may run before its worker
   * is given up on and replaced, ms (default 5000); the request gets 422.
   */
  overrunGraceMs?: number;
  /** The worker module (tests only). */
  workerUrl?: string;
}

interface Task {
  id: number;
  input: unknown;
  options: Omit<SimulateRequestOptions, "runScenario">;
  resolve: (reply: SimulateReply) => void;
  reject: (error: Error) => void;
  /** The queue-wait or run watchdog. */
  timer?: ReturnType<typeof setTimeout>;
}

interface Slot {
  worker: Worker;
  task: Task | undefined;
}

/**
 * Synchronous simulations off the service's event loop: a few Web Workers, each
 * running one simulation at a time (the simulation is CPU-bound and
 * synchronous; its time budget stops it from the inside), so health checks,
 * event streams and other requests keep being answered meanwhile. Requests
 * wait in order when every worker is busy, each for at most `queueTimeoutMs`.
 * A slot is freed on every path: an answer, a worker that fails or overruns
 * its budget (replaced), a request that cannot be sent to a worker.
 */
export class SimulatePool {
  #slots: Slot[] = [];
  #queue: Task[] = [];
  #nextId = 1;
  #closed = false;

  readonly maxWaiting: number;
  readonly queueTimeoutMs: number;
  readonly overrunGraceMs: number;
  readonly #workerUrl: string;

  /** Start `size` workers (at least 1). */
  constructor(size: number, options: SimulatePoolOptions = {}) {
    this.maxWaiting = options.maxWaiting ?? 64;
    this.queueTimeoutMs = options.queueTimeoutMs ?? 30_000;
    this.overrunGraceMs = options.overrunGraceMs ?? 5000;
    this.#workerUrl = options.workerUrl ?? WORKER;
    for (let i = 0; i < Math.max(1, size); i++) this.#slots.push(this.#start());
  }

  /** A worker in `slot` (a new slot by default); its handlers always refer to that slot. */
  #start(slot: Slot = { task: undefined } as Slot): Slot {
    const worker = new Worker(this.#workerUrl, { type: "module" });
    slot.worker = worker;
    slot.task = undefined;
    worker.onmessage = (
      event: MessageEvent<{ id: number; reply?: SimulateReply; crash?: string }>,
    ) => {
      const task = slot.task;
      if (slot.worker !== worker || !task || task.id !== event.data?.id) return;
      this.#free(slot);
      if (event.data.reply) task.resolve(event.data.reply);
      else task.reject(new Error(`simulation worker: ${event.data.crash}`));
      this.#pump();
    };
    worker.onerror = (event) => {
      event.preventDefault();
      if (slot.worker !== worker) return;
      const task = slot.task;
      this.#replace(slot);
      task?.reject(new Error(`simulation worker failed: ${event.message}`));
      this.#pump();
    };
    return slot;
  }

  /** The slot's task is over: no watchdog, no task. */
  #free(slot: Slot): void {
    if (slot.task?.timer !== undefined) clearTimeout(slot.task.timer);
    slot.task = undefined;
  }

  /** Stop the slot's worker and start a fresh one in the same slot. */
  #replace(slot: Slot): void {
    this.#free(slot);
    slot.worker.terminate();
    if (!this.#closed) this.#start(slot);
  }

  #pump(): void {
    for (const slot of this.#slots) {
      if (slot.task || this.#queue.length === 0) continue;
      const task = this.#queue.shift()!;
      clearTimeout(task.timer);
      try {
        slot.worker.postMessage({ id: task.id, input: task.input, options: task.options });
      } catch (error) {
        // A body the structured clone cannot copy (e.g. nested too deeply): the
        // slot never took it.
        task.resolve({
          ok: false,
          status: 400,
          code: "invalid_json",
          message: `The request body cannot be processed: ${
            error instanceof Error ? error.message : String(error)
          }`,
        });
        continue;
      }
      slot.task = task;
      // The simulation stops itself at its budget; one that does not (stuck in
      // a loop without progress calls) loses its worker.
      task.timer = setTimeout(() => {
        if (slot.task !== task) return;
        this.#replace(slot);
        task.resolve({
          ok: false,
          status: 422,
          code: "simulation_time_limit",
          message: `The simulation did not finish within ${task.options.limitMs} ms`,
        });
        this.#pump();
      }, task.options.limitMs + this.overrunGraceMs);
    }
  }

  /**
   * Simulate one request body in a worker: 429 when too many wait, 503 when
   * no worker came free in time. Rejects only on an engine bug.
   */
  run(
    input: unknown,
    options: Omit<SimulateRequestOptions, "runScenario">,
  ): Promise<SimulateReply> {
    if (this.#closed) return Promise.reject(new Error("simulation pool is closed"));
    if (this.#queue.length >= this.maxWaiting) {
      return Promise.resolve({
        ok: false,
        status: 429,
        code: "simulate_busy",
        message: `${this.maxWaiting} simulations are already waiting; try again shortly`,
      });
    }
    return new Promise((resolve, reject) => {
      const task: Task = { id: this.#nextId++, input, options, resolve, reject };
      task.timer = setTimeout(() => {
        const at = this.#queue.indexOf(task);
        if (at < 0) return;
        this.#queue.splice(at, 1);
        resolve({
          ok: false,
          status: 503,
          code: "simulate_busy",
          message: `No simulation worker came free within ${
            this.queueTimeoutMs / 1000
          } s; try again shortly`,
        });
      }, this.queueTimeoutMs);
      this.#queue.push(task);
      this.#pump();
    });
  }

  /** Requests running and waiting, for health reporting. */
  load(): { running: number; waiting: number } {
    return {
      running: this.#slots.filter((s) => s.task !== undefined).length,
      waiting: this.#queue.length,
    };
  }

  /** Stop every worker; running and waiting requests are rejected. */
  close(): void {
    this.#closed = true;
    for (const slot of this.#slots) {
      const task = slot.task;
      this.#free(slot);
      slot.worker.terminate();
      task?.reject(new Error("simulation pool closed"));
    }
    for (const task of this.#queue) {
      clearTimeout(task.timer);
      task.reject(new Error("simulation pool closed"));
    }
    this.#queue = [];
  }
}
