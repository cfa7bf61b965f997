/**
 * SPICE export: a stage as a deck a reviewer can run in any SPICE: a Level 1
 * model card from the device card (LEVEL=1 VTO KP LAMBDA GAMMA PHI), the
 * instance with W and L, supplies, bias sources and `.op`. A 0 V source in the
 * drain lead reports the drain current. Node and element names carry an
 * optional prefix so several stages can share one deck.
 */
import { defaultPhi, polaritySign, type DeviceCard } from "../device/card.js";
import { diffusionGeometry } from "../device/capacitance.js";
import { element, modelCard, spiceNumber, spicePrefix, writeDeck } from "../spice/deck.js";
import type { NetworkMapping } from "./stage.js";
import type { SpiceCircuit, Stage, StageDevice } from "./topology.js";

export { spiceNumber };

/** A Level 1 .model line from a device card (LEVEL=1 VTO KP LAMBDA GAMMA PHI, and TOX CGSO … FC when the card has a capacitance block). */
export function level1Model(name: string, card: DeviceCard): string {
  return modelCard(name, card.polarity, { level: 1, vto: card.vt0, kp: card.kp, lambda: card.lambda ?? 0, gamma: card.gamma ?? 0, phi: card.phi ?? defaultPhi, ...capacitanceModelParams(card) });
}

/** Level 1 capacitance parameters for the .model line (none when the card has no capacitance block). */
export function capacitanceModelParams(card: DeviceCard): Record<string, number> {
  const c = card.capacitance;
  if (!c) return {};
  const fields: Array<[string, number | undefined]> = [
    ["tox", c.tox],
    ["cgso", c.cgso],
    ["cgdo", c.cgdo],
    ["cgbo", c.cgbo],
    ["cj", c.cj],
    ["mj", c.mj],
    ["pb", c.pb],
    ["cjsw", c.cjsw],
    ["mjsw", c.mjsw],
    ["fc", c.fc],
  ];
  const out: Record<string, number> = {};
  for (const [k, v] of fields) if (v !== undefined) out[k] = v;
  return out;
}

/** AD/AS/PD/PS for the instance line, when the card has a capacitance block (stated or by the default rule). */
export function diffusionParams(dev: StageDevice): Record<string, number> {
  if (!dev.card.capacitance) return {};
  const g = diffusionGeometry(dev);
  return { AD: g.ad, AS: g.as, PD: g.pd, PS: g.ps };
}

/** The same as text for an instance line (" AD=… AS=… PD=… PS=…", or "" without a capacitance block). */
export function diffusionText(dev: StageDevice): string {
  return Object.entries(diffusionParams(dev))
    .map(([k, v]) => ` ${k}=${spiceNumber(v)}`)
    .join("");
}

/** Circuit lines of a single-transistor stage (no title, .op or .end). */
export function stageSpice(stage: Stage, map: NetworkMapping, prefix = ""): SpiceCircuit {
  const p = spicePrefix(prefix, "SPICE name prefix");
  const card = stage.device.card;
  const pmos = polaritySign(card) < 0;
  const n = (name: string) => `${p}${name}`;
  const vdd = n("vdd");
  const vss = n("vss");
  const drail = pmos ? vss : vdd;
  const srail = pmos ? vdd : vss;
  const model = `${p}mod`.replace(/[^A-Za-z0-9_]/g, "_");
  const lines: string[] = [];
  lines.push(level1Model(model, card));
  lines.push(`V${p}DD ${vdd} 0 ${spiceNumber(stage.supplies.vdd)}`);
  lines.push(`V${p}SS ${vss} 0 ${spiceNumber(stage.supplies.vss ?? 0)}`);
  const d = n("d");
  const g = n("g");
  const s = n("s");
  const ammeter = `V${p}ID`;
  if (map.rd > 0) {
    lines.push(`R${p}D ${drail} ${n("x")} ${spiceNumber(map.rd)}`);
    lines.push(`${ammeter} ${n("x")} ${d} 0`);
  } else lines.push(`${ammeter} ${drail} ${d} 0`);
  if (map.iss !== undefined && map.iss > 0) lines.push(pmos ? `I${p}SS ${srail} ${s} ${spiceNumber(map.iss)}` : `I${p}SS ${s} ${srail} ${spiceNumber(map.iss)}`);
  else if (map.rs > 0) lines.push(`R${p}S ${s} ${srail} ${spiceNumber(map.rs)}`);
  else lines.push(`V${p}S0 ${s} ${srail} 0`);
  if (map.gateToDrain) {
    const rf = (stage.components as Record<string, number>).rf;
    lines.push(`R${p}F ${d} ${g} ${spiceNumber(rf ?? 0)}`);
  } else if (map.divider) {
    lines.push(`R${p}G1 ${g} ${vdd} ${spiceNumber(map.divider.rg1)}`);
    lines.push(`R${p}G2 ${g} ${vss} ${spiceNumber(map.divider.rg2)}`);
  } else lines.push(`V${p}G ${g} 0 ${spiceNumber(map.vg ?? 0)}`);
  const b = stage.body === "rail" ? srail : s;
  const inst = `M${p}1`;
  lines.push(element(inst, [d, g, s, b], model, { W: stage.device.w, L: stage.device.l, ...diffusionParams(stage.device) }));
  return { lines, nodes: { gate: g, source: s, drain: d, body: b, vdd, vss }, drainAmmeter: ammeter, instance: inst, models: { [model]: card.polarity } };
}

/** A whole deck for one stage: title, cautions, circuit, .op and .end (every line through the deck writer). */
export function deckText(title: string, circuit: SpiceCircuit): string {
  return writeDeck({
    title,
    comments: [
      "Exported by pinchoff: SPICE Level 1 (Shichman-Hodges) card from the device card.",
      "Hand-analysis cross-check only: verify with your process models and by measurement.",
      `Drain current: i(${circuit.drainAmmeter}) (current into the drain).`,
    ],
    lines: circuit.lines,
    analyses: [".op"],
  });
}
