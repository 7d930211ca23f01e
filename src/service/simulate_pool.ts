import type { SimulateReply, SimulateRequestOptions } from "./simulate_request.ts";

const WORKER = new URL("./_simulate_worker.ts", import.meta.url).href;

interface Task {
  id: number;
  input: unknown;
  options: Omit<SimulateRequestOptions, "runScenario">;
  resolve: (reply: SimulateReply) => void;
  reject: (error: Error) => void;
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
 * wait in order when every worker is busy. A worker that fails is replaced.
 */
export class SimulatePool {
  #slots: Slot[] = [];
  #queue: Task[] = [];
  #nextId = 1;
  #closed = false;

  readonly maxWaiting: number;
  readonly #workerUrl: string;

  /**
   * Start `size` workers (at least 1); at most `maxWaiting` requests wait for one (default 64).
   * `workerUrl` replaces the worker module (tests only).
   */
  constructor(size: number, maxWaiting = 64, workerUrl = WORKER) {
    this.maxWaiting = maxWaiting;
    this.#workerUrl = workerUrl;
    for (let i = 0; i < Math.max(1, size); i++) this.#slots.push(this.#start());
  }

  /** A worker in `slot` (a new slot by default); its handlers always refer to that slot. */
  #start(slot: Slot = { task: undefined } as Slot): Slot {
    slot.worker = new Worker(this.#workerUrl, { type: "module" });
    slot.task = undefined;
    slot.worker.onmessage = (
      event: MessageEvent<{ id: number; reply?: SimulateReply; crash?: string }>,
    ) => {
      const task = slot.task;
      if (!task || task.id !== event.data.id) return;
      slot.task = undefined;
      if (event.data.reply) task.resolve(event.data.reply);
      else task.reject(new Error(`simulation worker: ${event.data.crash}`));
      this.#pump();
    };
    slot.worker.onerror = (event) => {
      event.preventDefault();
      const task = slot.task;
      slot.task = undefined;
      slot.worker.terminate();
      if (!this.#closed) this.#start(slot);
      task?.reject(new Error(`simulation worker failed: ${event.message}`));
      this.#pump();
    };
    return slot;
  }

  #pump(): void {
    for (const slot of this.#slots) {
      if (slot.task || this.#queue.length === 0) continue;
      const task = this.#queue.shift()!;
      slot.task = task;
      slot.worker.postMessage({ id: task.id, input: task.input, options: task.options });
    }
  }

  /** Simulate one request body in a worker (429 reply when too many wait). Rejects only on an engine bug. */
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
      this.#queue.push({ id: this.#nextId++, input, options, resolve, reject });
      this.#pump();
    });
  }

  /** Stop every worker; waiting requests are rejected. */
  close(): void {
    this.#closed = true;
    for (const slot of this.#slots) {
      slot.worker.terminate();
      slot.task?.reject(new Error("simulation pool closed"));
    }
    for (const task of this.#queue) task.reject(new Error("simulation pool closed"));
    this.#queue = [];
  }
}
