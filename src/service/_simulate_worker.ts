// Web Worker body of the simulation pool: one simulateRequest per message.
/// <reference lib="deno.worker" />
import { simulateRequest, type SimulateRequestOptions } from "./simulate_request.ts";

self.onmessage = (
  event: MessageEvent<{ id: number; input: unknown; options: SimulateRequestOptions }>,
) => {
  const { id, input, options } = event.data;
  try {
    self.postMessage({ id, reply: simulateRequest(input, options) });
  } catch (error) {
    // A bug in the engine: report it to the pool, which logs it; no stack to the client.
    self.postMessage({
      id,
      crash: error instanceof Error ? (error.stack ?? error.message) : String(error),
    });
  }
};
