import { type JobStore, StoreBusyError } from "../store/store.ts";
import {
  FINAL_JOB_STATUSES as FINAL,
  type JobEndEvent,
  type JobProgress,
  type JobStateEvent,
  type JobStatus,
} from "../wire/mod.ts";

/** Options of {@link jobEvents}. */
export interface JobEventsOptions {
  /** How often the store is polled, ms. */
  pollMs: number;
  /** Closes the stream (the service is shutting down). */
  signal?: AbortSignal;
  /** Comment line interval that keeps proxies from closing an idle stream, ms (default 15 000). */
  keepAliveMs?: number;
  /** Called once when the stream ends, however it ends (the service counts open streams). */
  onClose?: () => void;
}

/** Each event's data, by event name (schemas in `wire/job.ts`). */
interface JobEventData {
  state: JobStateEvent;
  progress: JobProgress;
  end: JobEndEvent;
}

/**
 * A Server-Sent Events response following one job: `state` ({status}) on every
 * status change, `progress` (the progress object) on every new progress write,
 * and a final `end` ({status, error}) after which the stream closes. Workers
 * write to the store from other processes, so the stream polls it.
 */
export function jobEvents(store: JobStore, id: string, options: JobEventsOptions): Response {
  const encoder = new TextEncoder();
  let timer: ReturnType<typeof setInterval> | undefined;
  let closed = false;
  let eventId = 0;
  const stop = () => {
    if (!closed) options.onClose?.();
    closed = true;
    if (timer !== undefined) clearInterval(timer);
    timer = undefined;
  };
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      let status: JobStatus | undefined;
      let progressSeq = -1;
      let lastWrite = Date.now();
      const send = <E extends keyof JobEventData>(event: E, data: JobEventData[E]) => {
        controller.enqueue(
          encoder.encode(`id: ${++eventId}\nevent: ${event}\ndata: ${JSON.stringify(data)}\n\n`),
        );
        lastWrite = Date.now();
      };
      const tick = () => {
        if (closed) return;
        try {
          const job = store.getJobSummary(id);
          if (!job) {
            send("end", { status: "failed", error: { code: "not_found", message: "job deleted" } });
          } else {
            if (job.status !== status) {
              status = job.status;
              send("state", { status });
            }
            if (job.progress && job.progress_seq !== progressSeq && !FINAL.has(job.status)) {
              progressSeq = job.progress_seq;
              send("progress", job.progress);
            }
            if (FINAL.has(job.status)) send("end", { status: job.status, error: job.error });
            else {
              if (Date.now() - lastWrite > (options.keepAliveMs ?? 15_000)) {
                controller.enqueue(encoder.encode(": keep-alive\n\n"));
                lastWrite = Date.now();
              }
              return;
            }
          }
        } catch (error) {
          // Another process holds the database's lock: look again at the next tick.
          if (error instanceof StoreBusyError) return;
          controller.error(error);
          stop();
          return;
        }
        stop();
        controller.close();
      };
      controller.enqueue(encoder.encode("retry: 2000\n\n"));
      tick();
      const abort = () => {
        if (closed) return;
        stop();
        try {
          controller.close();
        } catch {
          // already closed by the client
        }
      };
      if (!closed) timer = setInterval(tick, options.pollMs);
      if (options.signal?.aborted) abort();
      else options.signal?.addEventListener("abort", abort, { once: true });
    },
    cancel() {
      stop();
    },
  });
  return new Response(stream, {
    headers: {
      "content-type": "text/event-stream; charset=utf-8",
      "cache-control": "no-cache",
      "x-accel-buffering": "no",
    },
  });
}
