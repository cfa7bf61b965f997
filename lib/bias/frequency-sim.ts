/**
 * The simulated frequency response of a stage: the exported AC deck run
 * through ngspice (lib/spice/run.ts), |v(out)| and its phase read back at full
 * precision from a raw file. For the Bode plot's overlay and for checks; throws
 * SimulatorError when ngspice is missing or fails (callers that only want an
 * overlay use `trySimulateFrequency`).
 */
import { runDeckSync, SimulatorError } from "../spice/run.js";
import { writeDeck } from "../spice/deck.js";
import { spiceNumber } from "./spice.js";
import { acCircuit, type AcSweep } from "./frequency-spice.js";
import type { FrequencyAnalysis } from "./frequency.js";
import type { Stage, StageAnalysis } from "./topology.js";

export interface SimulatedResponse {
  readonly frequency: number[];
  /** |vout/vsig|. */
  readonly magnitude: number[];
  /** Phase in degrees. */
  readonly phaseDeg: number[];
  readonly source: string;
}

// Any topology's stage is accepted, as analyzeFrequency accepts it (a synthesised stage carries its own component type).
export function simulateFrequency(anyStage: Stage<string, object>, analysis: StageAnalysis, fa: FrequencyAnalysis, sweep?: AcSweep): SimulatedResponse {
  const stage = anyStage as Stage;
  const ac = acCircuit(stage, analysis, fa, "", sweep);
  const s = ac.sweep;
  const deck = writeDeck({
    title: `${stage.name ?? stage.topology}: AC response`,
    lines: ac.lines,
    control: [
      `ac dec ${s.pointsPerDecade} ${spiceNumber(s.start)} ${spiceNumber(s.stop)}`,
      `let hmag = vm(${ac.output})`,
      `let hph = vp(${ac.output})`,
      "let hf = real(frequency)",
      "setplot new",
      "let f = ac1.hf",
      "let m = ac1.hmag",
      "let p = ac1.hph",
      "write ac.raw f m p",
      "quit 0",
    ],
  });
  const r = runDeckSync({ deck, outputs: ["ac.raw"], origin: "AC response" });
  const plot = r.raw["ac.raw"]![0]!;
  const [f, m, p] = plot.columns;
  return { frequency: Array.from(f!), magnitude: Array.from(m!), phaseDeg: Array.from(p!, (x) => (x * 180) / Math.PI), source: "ngspice Level 1 .ac on the exported deck" };
}

/** The simulated response, or undefined when ngspice is not available (the Bode plot then shows the hand analysis alone). */
export function trySimulateFrequency(stage: Stage<string, object>, analysis: StageAnalysis, fa: FrequencyAnalysis, sweep?: AcSweep): SimulatedResponse | undefined {
  try {
    return simulateFrequency(stage, analysis, fa, sweep);
  } catch (e) {
    if (e instanceof SimulatorError && /not found/.test(e.message)) return undefined;
    throw e;
  }
}
