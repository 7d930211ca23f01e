// A simulation-pool worker for tests: on the input "die" it dies (an uncaught
// throw; a plain string, so Deno's report of it is one line and no stack trace),
// on "hang" it never answers, and answers anything else with the input itself.
/// <reference lib="deno.worker" />
self.onmessage = (event: MessageEvent<{ id: number; input: unknown }>) => {
  if (event.data.input === "die") throw "worker died on purpose";
  if (event.data.input === "hang") return;
  self.postMessage({ id: event.data.id, reply: { ok: true, result: event.data.input } });
};
