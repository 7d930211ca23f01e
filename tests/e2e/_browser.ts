import puppeteer, { type Browser, type Page } from "puppeteer-core";

/**
 * Chromium for the page's browser tests: the Debian package's binary (`.ci/run` installs
 * it) or `EVENFILL_CHROMIUM`, headless, with a throw-away profile.
 *
 * @module
 */

/** Where Chromium is. */
export const CHROMIUM = Deno.env.get("EVENFILL_CHROMIUM") ?? "/usr/bin/chromium";

/** Fail at once, with how to get it, when Chromium is not installed. */
export async function requireChromium(): Promise<void> {
  try {
    await Deno.stat(CHROMIUM);
  } catch {
    throw new Error(
      `Chromium not found at ${CHROMIUM}: install the Debian package (apt-get install -y chromium; .ci/run does this) or set EVENFILL_CHROMIUM.`,
    );
  }
}

/** Launch headless Chromium with a profile in a fresh temporary folder (`dir`, for removal). */
export async function launchChromium(): Promise<{ browser: Browser; dir: string }> {
  await requireChromium();
  const dir = await Deno.makeTempDir({ prefix: "evenfill-chromium-" });
  const browser = await puppeteer.launch({
    executablePath: CHROMIUM,
    userDataDir: dir,
    args: [
      "--headless",
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
  return { browser, dir };
}

/** Replace the editor's text as a user would (input event), and let the page react. */
export async function setEditor(page: Page, text: string): Promise<void> {
  await page.$eval("#scenario-text", (el, value) => {
    const ta = el as HTMLTextAreaElement;
    ta.value = value as string;
    ta.dispatchEvent(new Event("input", { bubbles: true }));
  }, text);
}
