/**
 * Headless Chromium (Debian /usr/bin/chromium) driven by playwright-core, and a
 * Jupyter Notebook server started and stopped by the test. Every wait is
 * bounded. Network access other than 127.0.0.1 and file:// is refused and
 * recorded, so a test can prove a page works offline.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";

export const chromiumPath = "/usr/bin/chromium";
export const chromiumArgs = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export interface BrowserSession {
  readonly context: BrowserContext;
  readonly page: Page;
  /** URLs the page tried to fetch from outside (refused). */
  readonly refused: string[];
  /** Uncaught page errors and console errors. */
  readonly errors: string[];
  close(): Promise<void>;
}

const local = (url: string) => /^(file:|data:|blob:|about:)/.test(url) || /^(https?|wss?):\/\/127\.0\.0\.1(:\d+)?\//.test(url);

/** A fresh browser profile in a temporary directory, removed on close. */
export async function openBrowser(opts: { timeoutMs?: number } = {}): Promise<BrowserSession> {
  const profile = mkdtempSync(join(tmpdir(), "pinchoff-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: chromiumPath,
    args: chromiumArgs,
    headless: true,
    timeout: opts.timeoutMs ?? 60_000,
    viewport: { width: 1280, height: 900 },
  });
  const refused: string[] = [];
  const errors: string[] = [];
  await context.route("**/*", (route) => {
    const url = route.request().url();
    if (local(url)) return route.continue();
    refused.push(url);
    return route.abort("internetdisconnected");
  });
  const page = context.pages()[0] ?? (await context.newPage());
  page.setDefaultTimeout(opts.timeoutMs ?? 60_000);
  page.on("pageerror", (e) => errors.push(`pageerror: ${e.message}`));
  page.on("console", (m) => {
    if (m.type() === "error") errors.push(`console: ${m.text()}`);
  });
  return {
    context,
    page,
    refused,
    errors,
    async close() {
      await context.close().catch(() => {});
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** A TCP port that was free a moment ago on 127.0.0.1. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const addr = srv.address();
      const port = typeof addr === "object" && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export interface NotebookServer {
  readonly url: string;
  readonly token: string;
  readonly log: () => string;
  stop(): Promise<void>;
}

/**
 * Start the Debian `jupyter-notebook` (classic Notebook 6) on 127.0.0.1 with a
 * random token, serving `root`, with our project-local kernels on JUPYTER_PATH.
 */
export async function startNotebookServer(root: string, jupyterPath: string, timeoutMs = 60_000): Promise<NotebookServer> {
  const port = await freePort();
  const token = Math.random().toString(36).slice(2) + Math.random().toString(36).slice(2);
  const runtime = mkdtempSync(join(tmpdir(), "pinchoff-jupyter-"));
  const proc: ChildProcess = spawn(
    "jupyter-notebook",
    ["--no-browser", "--ip=127.0.0.1", `--port=${port}`, "--port-retries=0", `--NotebookApp.token=${token}`, `--notebook-dir=${root}`, "--NotebookApp.open_browser=False",
      // The server refuses to start as root without this (containers, CI).
      ...(process.getuid?.() === 0 ? ["--allow-root"] : [])],
    {
      cwd: root,
      env: { ...process.env, JUPYTER_PATH: jupyterPath, JUPYTER_RUNTIME_DIR: runtime, JUPYTER_CONFIG_DIR: join(runtime, "config"), JUPYTER_DATA_DIR: join(runtime, "data") },
      stdio: ["ignore", "pipe", "pipe"],
      detached: true,
    },
  );
  let out = "";
  proc.stdout?.on("data", (d) => (out += d));
  proc.stderr?.on("data", (d) => (out += d));
  const url = `http://127.0.0.1:${port}`;
  const stop = async () => {
    if (proc.exitCode === null && proc.pid) {
      // SIGTERM: the server shuts its kernels down and exits without asking.
      try { process.kill(-proc.pid, "SIGTERM"); } catch { /* already gone */ }
      const gone = await new Promise<boolean>((r) => {
        const t = setTimeout(() => r(false), 10_000);
        proc.once("exit", () => { clearTimeout(t); r(true); });
      });
      if (!gone) try { process.kill(-proc.pid, "SIGKILL"); } catch { /* already gone */ }
    }
    rmSync(runtime, { recursive: true, force: true });
  };
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    if (proc.exitCode !== null) {
      await stop();
      throw new Error(`jupyter-notebook exited (${proc.exitCode}) before it was ready:\n${out}`);
    }
    try {
      const r = await fetch(`${url}/api/status?token=${token}`);
      if (r.ok) break;
    } catch { /* not listening yet */ }
    if (Date.now() > deadline) {
      await stop();
      throw new Error(`jupyter-notebook did not answer on ${url} within ${timeoutMs} ms:\n${out}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return { url, token, log: () => out, stop };
}
