/** Gate bias from a resistor divider rg1 (to vdd) / rg2 (to vss): Thevenin voltage and resistance. */
import { InputError } from "../../errors.js";
import { dividerGate, dividerResistance } from "../../formulas/bias.formulas.js";
import type { Ohms, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Stage } from "../topology.js";

export function dividerBias(rg1: number, rg2: number, stage: Stage<string, unknown>, rec?: Derivation): { vgg: number; rg: number } {
  const o = stage.name ? `stage "${stage.name}"` : `${stage.topology} stage`;
  if (!(rg1 > 0)) throw new InputError(rg1, "a divider resistance > 0 Ω", `${o}: components.rg1`);
  if (!(rg2 > 0)) throw new InputError(rg2, "a divider resistance > 0 Ω", `${o}: components.rg2`);
  const vdd = stage.supplies.vdd;
  const vss = (stage.supplies.vss ?? 0) as Volts;
  const vgg = dividerGate.fn(vss, vdd, rg1 as Ohms, rg2 as Ohms);
  const rg = dividerResistance.fn(rg1 as Ohms, rg2 as Ohms);
  if (rec) {
    rec.step(dividerGate, [vss, vdd, rg1, rg2], vgg, "no gate current, so the divider sets the gate");
    rec.step(dividerResistance, [rg1, rg2], rg, "the signal source sees the divider in parallel");
  }
  return { vgg, rg };
}
