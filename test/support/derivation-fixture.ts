/**
 * A derivation with every kind of entry, for renderer tests. The device card and
 * the scenario are invented for the tests (not a real process).
 */
import { Derivation, device, operatingPoint, amperesPerVoltSquared, volts, meters, perVolt, sqrtVolts, type DeviceCard } from "../../lib/index.js";

export const inventedCard: DeviceCard = {
  name: "invented-n",
  polarity: "nmos",
  kp: amperesPerVoltSquared(120e-6),
  vt0: volts(0.45),
  lambda: perVolt(0.04),
  gamma: sqrtVolts(0.4),
  phi: volts(0.7),
  provenance: "invented for the tests",
};

export function fixtureDerivation(): Derivation {
  const m = device(inventedCard, meters(20e-6), meters(1e-6));
  const rec = new Derivation("Operating point of M1 <bias> & \"cell\"").describe("invented 1.8 V bias cell | test");
  rec.input("VGS", 0.75, "voltage", "schematic", "750m").input("VDS", 0.9, "voltage").input("VSB", 0.2, "voltage");
  const op = operatingPoint(m, { vgs: volts(0.75), vds: volts(0.9), vsb: volts(0.2) }, {}, rec);
  rec.check("Saturation margin VDS − VOV", op.saturationMargin, "voltage", { min: 0.1 }, "room for signal swing");
  rec.check("Overdrive window", op.vov, "voltage", { min: 0.3, max: 0.5 });
  rec.check("Output resistance", Infinity, "resistance", { min: 1e4 });
  rec.assume("Body tied to ground; long-channel square law");
  rec.find("caution", "Overdrive is small: the square law overstates gm near weak inversion.");
  rec.find("warning", "<script>alert('x')</script> must stay text");
  rec.cite("Invented reference *for* the test [1]");
  return rec;
}
