/**
 * The open 180 nm process's measured I–V data shipped in `data/pdk180/`
 * (GF180MCU 3.3 V devices; LICENSE and SOURCE.md beside them): the default
 * measurement file of the device-characterisation template and the checks.
 */
import { join, resolve } from "node:path";
import { packageRoot } from "../io/package-root.js";
import { InputError } from "../errors.js";

/** The folder of the shipped open-process data. */
export const builtinDataFolder = (): string => join(packageRoot(), "data", "pdk180");

/** The shipped measured sweeps of the open process's 3.3 V NMOS or PMOS (long layout; the PMOS file records |ID|). */
export function builtinMeasurementFile(polarity: "nmos" | "pmos"): string {
  if (polarity !== "nmos" && polarity !== "pmos") throw new InputError(polarity, `"nmos" or "pmos"`, "builtinMeasurementFile");
  return resolve(builtinDataFolder(), polarity === "nmos" ? "nfet_03v3_meas_id.csv" : "pfet_03v3_meas_id.csv");
}
