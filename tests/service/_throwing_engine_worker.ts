// A simulation-pool worker for tests: the real request path (simulateRequest)
// over an engine that throws, as the fill engine did on a branch that froze off.
/// <reference lib="deno.worker" />
import {
  simulateRequest,
  type SimulateRequestOptions,
} from "../../src/service/simulate_request.ts";

self.onmessage = (
  event: MessageEvent<{ id: number; input: unknown; options: SimulateRequestOptions }>,
) => {
  const { id, input, options } = event.data;
  const runScenario = () => {
    throw new RangeError("initialFlows has 15 values for 13 elements");
  };
  try {
    self.postMessage({ id, reply: simulateRequest(input, { ...options, runScenario }) });
  } catch (error) {
    self.postMessage({ id, crash: error instanceof Error ? error.message : String(error) });
  }
};
