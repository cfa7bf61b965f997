#!/usr/bin/env node
// Installs what a task needs when it is missing, saying what it does:
// npm packages, Debian packages (ngspice, Jupyter, Chromium), the built library
// and the project-local tslab kernel. Plain JavaScript: it runs before npm ci.
//   node lib/setup/prepare.mjs [npm] [build] [ngspice] [jupyter] [chromium] [kernel]
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, statSync, readdirSync, symlinkSync, lstatSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "../..");
const say = (m) => console.log(`[pinchoff setup] ${m}`);
const has = (cmd) => spawnSync("sh", ["-c", `command -v ${cmd}`], { stdio: "ignore" }).status === 0;
const run = (cmd, args, opts = {}) => {
  const r = spawnSync(cmd, args, { stdio: "inherit", cwd: root, ...opts });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(" ")} failed (exit ${r.status})`);
};

const debian = {
  ngspice: { check: () => has("ngspice"), packages: ["ngspice"] },
  jupyter: {
    check: () => has("jupyter") && spawnSync("jupyter", ["nbconvert", "--version"], { stdio: "ignore" }).status === 0 && spawnSync("/usr/bin/python3", ["-c", "import nbclient, ipykernel"], { stdio: "ignore" }).status === 0,
    packages: ["jupyter-client", "jupyter-nbconvert", "python3-nbclient", "python3-ipykernel", "jupyter-notebook"],
  },
  chromium: { check: () => existsSync("/usr/bin/chromium"), packages: ["chromium"] },
};

let aptUpdated = false;
function aptInstall(name) {
  const d = debian[name];
  if (d.check()) return;
  if (!has("apt-get")) throw new Error(`${name} is missing and this is not a Debian-like system: install ${d.packages.join(" ")} by hand`);
  const root = typeof process.getuid === "function" && process.getuid() === 0;
  const sudo = root ? [] : has("sudo") ? ["sudo"] : null;
  if (!sudo) throw new Error(`${name} is missing: run as root: apt-get install ${d.packages.join(" ")}`);
  const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
  if (!aptUpdated) {
    say("apt-get update (once, to find Debian packages)");
    run(sudo[0] ?? "apt-get", [...sudo.slice(1), ...(sudo.length ? ["apt-get"] : []), "update", "-qq"], { env });
    aptUpdated = true;
  }
  say(`installing Debian packages for ${name}: ${d.packages.join(" ")}`);
  run(sudo[0] ?? "apt-get", [...sudo.slice(1), ...(sudo.length ? ["apt-get"] : []), "install", "-y", "-qq", ...d.packages], { env });
}

function newest(dir) {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newest(p) : statSync(p).mtimeMs);
  }
  return t;
}

const steps = {
  npm() {
    // Installed, complete and not older than the lock file (a pull that changes the dependencies re-installs).
    const installed = join(root, "node_modules/.package-lock.json");
    const pkg = JSON.parse(readFileSync(join(root, "package.json"), "utf8"));
    const missing = Object.keys({ ...pkg.dependencies, ...pkg.devDependencies }).filter((n) => !existsSync(join(root, "node_modules", n, "package.json")));
    const stale = existsSync(installed) && statSync(join(root, "package-lock.json")).mtimeMs > statSync(installed).mtimeMs;
    if (existsSync(installed) && !missing.length && !stale) return;
    say(
      !existsSync(installed)
        ? "installing npm packages (npm ci)"
        : missing.length
          ? `npm packages missing (${missing.slice(0, 3).join(", ")}${missing.length > 3 ? ", …" : ""}): re-installing (npm ci)`
          : "package-lock.json changed since the last install: re-installing npm packages (npm ci)",
    );
    run("npm", ["ci", "--no-audit", "--no-fund"]);
  },
  build() {
    const stamp = join(root, "dist/index.js");
    if (existsSync(stamp) && statSync(stamp).mtimeMs >= newest(join(root, "lib"))) return;
    say("building the library into dist/ (tsc, then esbuild links the entry points)");
    run(process.execPath, [join(root, "lib/setup/build.mjs")]);
  },
  ngspice: () => aptInstall("ngspice"),
  jupyter: () => aptInstall("jupyter"),
  chromium: () => aptInstall("chromium"),
  kernel() {
    const prefix = join(root, ".kernel");
    const spec = join(prefix, "share/jupyter/kernels/tslab/kernel.json");
    // A spec written for another checkout (moved or copied) names a tslab that is not this one's.
    let current = false;
    try { current = JSON.parse(readFileSync(spec, "utf8")).argv?.[0] === join(root, "node_modules/.bin/tslab"); } catch { /* absent or unreadable */ }
    if (!current) {
      say("registering the tslab TypeScript kernel in .kernel/ (project-local)");
      mkdirSync(prefix, { recursive: true });
      run(join(root, "node_modules/.bin/tslab"), ["install", "--python=/usr/bin/python3", `--binary=${join(root, "node_modules/.bin/tslab")}`, `--prefix=${prefix}`]);
    }
    // Notebooks import "pinchoff"; inside this checkout that name resolves through a self link.
    const link = join(root, "node_modules/pinchoff");
    let present = false;
    try { lstatSync(link); present = true; } catch { /* absent */ }
    if (!present) {
      say("linking node_modules/pinchoff to this checkout so notebooks can import it");
      symlinkSync("..", link, "dir");
    }
  },
};

const wanted = process.argv.slice(2);
try {
  for (const name of wanted.length ? wanted : ["npm", "build"]) {
    if (!steps[name]) throw new Error(`unknown setup step ${name}; known: ${Object.keys(steps).join(", ")}`);
    steps[name]();
  }
} catch (e) {
  console.error(`[pinchoff setup] ${e.message}`);
  process.exit(1);
}
