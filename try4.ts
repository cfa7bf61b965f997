import { readMeasurements } from "./lib/measure/read.js";
import { select } from "./lib/measure/select.js";
import { fitSweep } from "./lib/fit/fit.js";
import { fitModels } from "./lib/fit/models.js";
const which = process.argv[2] ?? "ekv";
for (const dev of ["nfet", "pfet"]) {
  const set = readMeasurements(`data/pdk180/${dev}_03v3_meas_id.csv`);
  for (const l of [0.28, 0.5, 1, 5, 10]) {
    const s = select(set, { w: 10e-6, l: l * 1e-6, temp: 298.15, currentSign: dev === "pfet" ? "magnitude" : "spice" });
    const t = performance.now();
    try {
    const m = fitModels[which]!;
    const f1 = fitSweep(m, s, { window: { vds: [0, 0.1] } });
    const f = fitSweep(m, s, { start: f1.p, maxIterations: 500 });
    const a = f.accuracy;
    console.log(dev, l, (performance.now() - t).toFixed(0), "ms it", f.iterations, f.stop, "rms", a.overall.rms?.toFixed(4), "p95", a.overall.p95?.toFixed(4), "max", a.overall.max?.toFixed(3), "w/m/s/t/s", ["weak","moderate","strong","triode","saturation"].map(r => (a.regions as any)[r].rms?.toFixed(3)).join("/"), f.parameters.map(p => `${p.name}=${p.value.toPrecision(3)}`).join(" "));
    } catch (e) { console.log(dev, l, String(e).slice(0, 300)); }
  }
}
