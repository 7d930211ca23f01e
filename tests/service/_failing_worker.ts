// A simulation-pool worker for tests: dies (an uncaught error) on the input "die",
// answers anything else with the input itself.
/// <reference lib="deno.worker" />
self.onmessage = (event: MessageEvent<{ id: number; input: unknown }>) => {
  if (event.data.input === "die") throw new Error("worker died on purpose");
  self.postMessage({ id: event.data.id, reply: { ok: true, result: event.data.input } });
};
