/**
 * SPICE export: a stage as a deck a reviewer can run in any SPICE: a Level 1
 * model card from the device card (LEVEL=1 VTO KP LAMBDA GAMMA PHI), the
 * instance with W and L, supplies, bias sources and `.op`. A 0 V source in the
 * drain lead reports the drain current. Node and element names carry an
 * optional prefix so several stages can share one deck.
 */
import { defaultPhi, polaritySign, type DeviceCard } from "../device/card.js";
import { diffusionGeometry } from "../device/capacitance.js";
import type { NetworkMapping } from "./stage.js";
import type { SpiceCircuit, Stage, StageDevice } from "./topology.js";

/** A number as SPICE reads it: shortest exact decimal form. */
export const spiceNumber = (x: number): string => {
  if (!Number.isFinite(x)) throw new RangeError(`not a finite number: ${x}`);
  return String(x);
};

/** Level 1 capacitance parameters for the .model line (empty when the card has none). */
export function capacitanceModelText(card: DeviceCard): string {
  const c = card.capacitance;
  if (!c) return "";
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
  return fields.map(([k, v]) => (v === undefined ? "" : ` ${k}=${spiceNumber(v)}`)).join("");
}

/** AD/AS/PD/PS on the instance line, when the card has junction data (stated or by the default rule). */
export function diffusionText(dev: StageDevice): string {
  if (!dev.card.capacitance) return "";
  const g = diffusionGeometry(dev);
  return ` AD=${spiceNumber(g.ad)} AS=${spiceNumber(g.as)} PD=${spiceNumber(g.pd)} PS=${spiceNumber(g.ps)}`;
}

/** Circuit lines of a single-transistor stage (no title, .op or .end). */
export function stageSpice(stage: Stage, map: NetworkMapping, prefix = ""): SpiceCircuit {
  const p = prefix;
  const card = stage.device.card;
  const pmos = polaritySign(card) < 0;
  const n = (name: string) => `${p}${name}`;
  const vdd = n("vdd");
  const vss = n("vss");
  const drail = pmos ? vss : vdd;
  const srail = pmos ? vdd : vss;
  const model = `${p}mod`.replace(/[^A-Za-z0-9_]/g, "_");
  const lines: string[] = [];
  lines.push(
    `.model ${model} ${pmos ? "pmos" : "nmos"} level=1 vto=${spiceNumber(card.vt0)} kp=${spiceNumber(card.kp)} lambda=${spiceNumber(card.lambda ?? 0)} gamma=${spiceNumber(card.gamma ?? 0)} phi=${spiceNumber(card.phi ?? defaultPhi)}${capacitanceModelText(card)}`,
  );
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
  lines.push(`${inst} ${d} ${g} ${s} ${b} ${model} W=${spiceNumber(stage.device.w)} L=${spiceNumber(stage.device.l)}${diffusionText(stage.device)}`);
  return { lines, nodes: { gate: g, source: s, drain: d, body: b, vdd, vss }, drainAmmeter: ammeter, instance: inst };
}

/** A whole deck for one stage: title, cautions, circuit, .op and .end. */
export function deckText(title: string, circuit: SpiceCircuit): string {
  return [
    `* ${title}`,
    "* Exported by pinchoff: SPICE Level 1 (Shichman-Hodges) card from the device card.",
    "* Hand-analysis cross-check only: verify with your process models and by measurement.",
    `* Drain current: i(${circuit.drainAmmeter}) (current into the drain).`,
    ...circuit.lines,
    ".op",
    ".end",
    "",
  ].join("\n");
}
