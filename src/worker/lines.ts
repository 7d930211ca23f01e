/**
 * The newline-separated lines of a byte stream (UTF-8), without their "\n"; a last
 * line with no newline is not yielded (the protocols here always end lines).
 *
 * @module
 */
export async function* lines(stream: ReadableStream<Uint8Array>): AsyncGenerator<string> {
  const decoder = new TextDecoder();
  let rest = "";
  for await (const bytes of stream) {
    rest += decoder.decode(bytes, { stream: true });
    let nl;
    while ((nl = rest.indexOf("\n")) >= 0) {
      yield rest.slice(0, nl);
      rest = rest.slice(nl + 1);
    }
  }
}
