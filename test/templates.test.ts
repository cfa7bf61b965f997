/**
 * Every template in notebooks-templates/ executes through the real tslab
 * kernel under Jupyter (nbconvert's ExecutePreprocessor) with no cell error
 * and shows at least one derivation whose checks all pass. A stage template
 * also shows its tolerance corners and the output characteristic with its load
 * and operating point; a device-characterisation template (metadata.pinchoff.kind
 * "characterisation") instead shows its fits against the data on log and linear
 * axes, the residuals and the validity map, and writes a card that reads back.
 * The static contract (nbformat 4.5 with cell ids, one design-inputs cell,
 * invented demo data labelled, cautions) is checked first, without a kernel.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { dimensions } from "../lib/quantity.js";
import { readCardFile } from "../lib/device/card-file.js";

const root = resolve(import.meta.dirname, "..");
const dir = join(root, "notebooks-templates");
const templates = readdirSync(dir).filter((f) => f.endsWith(".ipynb")).sort();
const jupyterPath = join(root, ".kernel/share/jupyter");

interface Cell { cell_type: string; id?: string; metadata: { tags?: string[] }; source: string | string[]; outputs?: Output[] }
interface Output { output_type: string; name?: string; text?: string | string[]; data?: Record<string, unknown>; ename?: string; evalue?: string }
interface Notebook { nbformat: number; nbformat_minor: number; metadata: { kernelspec?: { name?: string }; pinchoff?: { demo?: boolean; kind?: string } }; cells: Cell[] }

const src = (c: Cell) => (Array.isArray(c.source) ? c.source.join("") : c.source);
const text = (t: string | string[] | undefined) => (Array.isArray(t) ? t.join("") : t ?? "");
const read = (p: string) => JSON.parse(readFileSync(p, "utf8")) as Notebook;
/** A device-characterisation template: measured data in, fitted card out (no stage, so no tolerance corners or load line). */
const characterises = (nb: Notebook) => nb.metadata.pinchoff?.kind === "characterisation";

describe("template files", () => {
  it("there are at least six stage templates and a device-characterisation template", () => {
    const kinds = templates.map((f) => characterises(read(join(dir, f))));
    expect(kinds.filter((k) => !k).length).toBeGreaterThanOrEqual(6);
    expect(kinds.filter((k) => k).length).toBeGreaterThanOrEqual(1);
  });
  describe.each(templates)("%s", (file) => {
    const nb = read(join(dir, file));
    it("is nbformat 4.5 with unique cell ids, the tslab kernel and no stored outputs", () => {
      expect([nb.nbformat, nb.nbformat_minor]).toEqual([4, 5]);
      expect(nb.metadata.kernelspec?.name).toBe("tslab");
      const ids = nb.cells.map((c) => c.id);
      ids.forEach((id) => expect(id).toMatch(/^[A-Za-z0-9-_]{1,64}$/));
      expect(new Set(ids).size).toBe(ids.length);
      nb.cells.filter((c) => c.cell_type === "code").forEach((c) => expect(c.outputs).toEqual([]));
    });
    it("has exactly one design-inputs cell, one NAME: [\"value unit\", \"dimension\"] entry per line", () => {
      const tagged = nb.cells.filter((c) => c.metadata.tags?.includes("design-inputs"));
      expect(tagged).toHaveLength(1);
      const lines = src(tagged[0]!).split("\n");
      expect(lines[0]).toBe("const given = designInputs({");
      expect(lines.at(-1)).toBe("});");
      const entries = lines.slice(1, -1);
      expect(entries.length).toBeGreaterThan(0);
      for (const l of entries) {
        const m = /^ {2}([A-Za-z_][A-Za-z0-9_]*): \["([^"\\]+)", "([A-Za-z]+)"\],$/.exec(l);
        expect(m, l).not.toBeNull();
        expect(Object.keys(dimensions)).toContain(m![3]);
      }
    });
    it("imports only package names, labels its demo data invented and carries the cautions", () => {
      const all = nb.cells.map(src).join("\n");
      for (const m of all.matchAll(/from\s+"([^"]+)"/g)) expect(["pinchoff", "pinchoff/notebook", "pinchoff/units", "pinchoff/render", "pinchoff/fit"]).toContain(m[1]);
      const first = nb.cells[0]!;
      expect(first.cell_type).toBe("markdown");
      expect(src(first)).toMatch(/^# /);
      expect(src(first)).toMatch(/invented/i);
      // A stage template's cards are invented; a characterisation template's data are measured and name their source.
      if (characterises(nb)) expect(src(first)).toMatch(/measurements[^]*data\/pdk180\/SOURCE\.md/);
      else expect(all).toMatch(/provenance: "(invented|fitted to the characterisation table)/);
      const md = nb.cells.filter((c) => c.cell_type === "markdown").map(src).join("\n");
      for (const phrase of [/approximate/i, /simulation/i, /measurement/i, /ratings/i, /local codes/i, /licensed/i]) expect(md).toMatch(phrase);
    });
    it("an on-chip design uses drawn resistor values and their on-chip spread, never an E-series at its board tolerance", () => {
      const all = nb.cells.map(src).join("\n");
      if (!/on-chip/i.test(src(nb.cells[0]!))) return;
      // Integrated resistors are drawn to any value and spread about ±20 % (from memory, typical of polysilicon).
      expect(all).not.toMatch(/series:\s*"E\d+"/);
      const rtol = /R_TOL: \["([\d.]+) %"/.exec(all);
      if (rtol) expect(Number(rtol[1])).toBeGreaterThanOrEqual(15);
    });

    it("a characterisation template: fits, error per region, plots, the written card and its use, in that order; replacing a card is an explicit input", () => {
      if (!characterises(nb)) return;
      const heading = (re: RegExp) => nb.cells.findIndex((c) => c.cell_type === "markdown" && re.test(src(c)));
      const order = [/^## Measurement file/, /^## Fits/, /^## Error per region/, /^## Plots/, /^## The card/, /^## Using the card/, /^## Summary/, /^## Cautions/].map(heading);
      order.forEach((i) => expect(i).toBeGreaterThan(0));
      expect([...order].sort((a, b) => a - b)).toEqual(order);
      const all = nb.cells.map(src).join("\n");
      for (const call of ["readMeasurements(", "fitSweep(", "fitFigures(", "writeCardFile(", "readCardFile("]) expect(all).toContain(call);
      expect(all).toMatch(/writeCardFile\([^)]*replace: given\.REPLACE_CARD/);
      const inputs = src(nb.cells.find((c) => c.metadata.tags?.includes("design-inputs"))!);
      for (const name of ["W", "L", "TEMP", "REPLACE_CARD"]) expect(inputs).toMatch(new RegExp(`^  ${name}: `, "m"));
    });

    it("has a tolerance section after the design and before the plots, with spreads, temperatures and their limits stated", () => {
      if (characterises(nb)) return;
      const heading = (re: RegExp) => nb.cells.findIndex((c) => c.cell_type === "markdown" && re.test(src(c)));
      const tol = heading(/^## Tolerances and temperature/);
      expect(tol).toBeGreaterThan(heading(/^## Design(\n|$)/));
      expect(tol).toBeLessThan(heading(/^## Plots/));
      const md = src(nb.cells[tol]!);
      for (const phrase of [/invented/i, /from memory/i, /monotone/i, /mismatch/i, /°C/]) expect(md).toMatch(phrase);
      expect(src(nb.cells[tol + 1]!)).toMatch(/toleranceAnalysis\(/);
      const inputs = src(nb.cells.find((c) => c.metadata.tags?.includes("design-inputs"))!);
      for (const name of ["VT0_SPREAD", "KP_SPREAD", "ID_BAND"]) expect(inputs).toMatch(new RegExp(`^  ${name}: `, "m"));
      expect(inputs.match(/"temperature"\]/g)?.length ?? 0).toBeGreaterThanOrEqual(2);
    });
  });
});

describe("templates run through the tslab kernel", () => {
  let out: string;
  beforeAll(() => {
    execFileSync(process.execPath, [join(root, "lib/setup/prepare.mjs"), "build", "kernel"], { cwd: root, stdio: "pipe" });
    out = mkdtempSync(join(tmpdir(), "pinchoff-templates-"));
  }, 300_000);
  afterAll(() => rmSync(out, { recursive: true, force: true }));

  it.each(templates)("%s executes with every check passing and its plots shown", (file) => {
    const target = join(out, file);
    // --allow-errors keeps the whole notebook, so the assertion can name the failing cell.
    execFileSync("jupyter", ["nbconvert", "--to", "notebook", "--execute", "--allow-errors", "--ExecutePreprocessor.kernel_name=tslab", "--ExecutePreprocessor.timeout=240", join(dir, file), "--output", target], {
      cwd: dir,
      env: { ...process.env, JUPYTER_PATH: jupyterPath },
      stdio: "pipe",
      timeout: 600_000,
    });
    const nb = read(target);
    const characterisation = characterises(nb);
    const problems: string[] = [];
    const printed: string[] = [];
    const derivations: Array<{ title: string; checks: Array<{ title: string; passed: boolean; value: number; max?: number; margin: number }>; findings?: Array<{ severity: string; text: string }> }> = [];
    const plots: Array<{ kind: string; figure: { data: Array<{ meta?: { role?: string } }> } }> = [];
    const parts: string[] = [];
    let libraryCarriers = 0;
    nb.cells.forEach((c, i) => {
      for (const o of c.outputs ?? []) {
        if (o.output_type === "error") problems.push(`cell ${i}: ${o.ename}: ${o.evalue}`);
        // tslab reports TypeScript errors on stderr and does not run the cell.
        if (o.output_type === "stream" && o.name === "stderr") problems.push(`cell ${i} stderr: ${text(o.text)}`);
        if (o.output_type === "stream" && o.name === "stdout") printed.push(text(o.text));
        const d = o.data?.["application/vnd.pinchoff.derivation+json"];
        if (d) derivations.push(d as (typeof derivations)[number]);
        const p = o.data?.["application/vnd.pinchoff.plot+json"];
        if (p) plots.push(p as (typeof plots)[number]);
        const part = o.data?.["application/vnd.pinchoff.part+json"] as { part?: string } | undefined;
        if (part?.part) parts.push(part.part);
        if (text(o.data?.["text/html"] as string | string[] | undefined).includes("data-pinchoff-plot-library")) libraryCarriers++;
      }
    });
    expect(problems).toEqual([]);
    expect(derivations.length).toBeGreaterThan(0);
    const failed = derivations.flatMap((d) => d.checks.filter((c) => !c.passed).map((c) => `${d.title}: ${c.title}`));
    expect(failed).toEqual([]);
    expect(derivations.reduce((n, d) => n + d.checks.length, 0)).toBeGreaterThan(0);
    if (characterisation) {
      // Measured against model on a log and a linear axis, the residuals and the validity map.
      const kinds = plots.map((p) => p.kind);
      const compared = plots.filter((p) => p.kind === "measured-against-model") as unknown as Array<{ figure: { layout: { yaxis?: { type?: string } }; data: Array<{ meta?: { role?: string } }> } }>;
      expect(compared.some((p) => p.figure.layout.yaxis?.type === "log")).toBe(true);
      expect(compared.some((p) => p.figure.layout.yaxis?.type !== "log")).toBe(true);
      for (const p of compared) expect(p.figure.data.map((t) => t.meta?.role)).toEqual(expect.arrayContaining(["measured", "model"]));
      expect(kinds).toContain("fit-residuals");
      expect(kinds).toContain("validity-map");
      expect(libraryCarriers).toBe(1);
      expect(parts).toEqual(["summary"]);
      // The card it wrote reads back as a valid EKV card; removed afterwards (the default path is a scratch folder).
      const path = /card written to (.+)/.exec(printed.join(""))?.[1]?.trim();
      expect(path, "the notebook prints the card's path").toBeDefined();
      try {
        const card = readCardFile(path!);
        expect((card as { model?: string }).model).toBe("ekv");
      } finally {
        rmSync(path!, { force: true });
      }
      return;
    }
    // The tolerance section ran its corners and recorded the saturation and drain-current checks.
    const tolerance = derivations.find((d) => d.title.startsWith("Tolerances and temperature"));
    expect(tolerance, "a derivation titled Tolerances and temperature").toBeDefined();
    const tolChecks = tolerance!.checks.map((c) => c.title);
    expect(tolChecks.some((t) => /^Saturation margin in every case/.test(t))).toBe(true);
    expect(tolChecks.some((t) => /^Drain current within ±[\d.]+ % of nominal in every case/.test(t))).toBe(true);
    expect(tolChecks.some((t) => /^No corner out of saturation/.test(t))).toBe(true);
    // A design an experienced engineer would sign (common practice): every transistor in strong inversion, where the
    // square law holds, and the drain-current band met with at least 15 % of the band to spare.
    const inversion = derivations.flatMap((d) => (d.findings ?? []).filter((f) => /\b(moderate|weak) inversion\b/i.test(f.text)).map((f) => `${d.title}: ${f.text}`));
    expect(inversion).toEqual([]);
    const band = tolerance!.checks.find((c) => /^Drain current within/.test(c.title))!;
    expect(band.margin / band.max!).toBeGreaterThanOrEqual(0.15);
    if (read(join(dir, file)).metadata.pinchoff?.demo) expect(band.max!).toBeLessThanOrEqual(0.2);
    const output = plots.find((p) => p.kind === "output-characteristics");
    expect(output).toBeDefined();
    const roles = output!.figure.data.map((t) => t.meta?.role);
    expect(roles).toContain("operating-point");
    expect(roles).toContain("boundary");
    expect(roles.some((r) => r === "load-line" || r === "load-curve")).toBe(true);
    expect(libraryCarriers).toBe(1);
    // The report's results box, corner spread and deck come from these marked outputs.
    expect(parts.filter((p) => p !== "frequency").sort()).toEqual(["corner-spread", "spice-deck", "summary"]);
    // A template with a frequency section shows its record, marks its frequency table for the report and draws a Bode plot.
    if (read(join(dir, file)).cells.some((c) => c.cell_type === "markdown" && /^## Frequency response/.test(src(c)))) {
      expect(derivations.some((d) => d.title.startsWith("Frequency response"))).toBe(true);
      expect(parts.filter((p) => p === "frequency")).toHaveLength(1);
      expect(plots.some((p) => p.kind === "bode")).toBe(true);
    }
  }, 600_000);
});
