/**
 * A device is validated once, when it is made, and nothing unvalidated reaches
 * the hot path: the type says so (a Device only comes from device() or
 * checkDevice()) and the public entry points check it at run time.
 */
import { describe, expect, it } from "vitest";
import {
  amperes,
  amperesPerVoltSquared,
  checkDevice,
  device,
  drainCurrent,
  gateVoltageFor,
  InputError,
  isDevice,
  meters,
  operatingPoint,
  perVolt,
  smallSignal,
  volts,
  type Device,
  type DeviceCard,
} from "../lib/index.js";

// Invented card for unit tests (not a real process).
const card: DeviceCard = { name: "val-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05) };
const um = meters(1e-6);
const bias = { vgs: volts(1), vds: volts(1) };
/** Build a device around the type system, as plain JavaScript or a JSON file would. */
const raw = (d: unknown) => d as Device;

describe("impossible cards and sizes are refused when the device is made", () => {
  const cases: Array<[string, () => unknown, RegExp]> = [
    ["kp NaN", () => device({ ...card, kp: amperesPerVoltSquared(NaN) }, um, um), /device\.card "val-n"\.kp: got NaN, expected a process transconductance/],
    ["W < 0", () => device(card, meters(-1e-6), um), /device\.w: got -0\.000001, expected a channel width W > 0/],
    ["λ = −1", () => device({ ...card, lambda: perVolt(-1) }, um, um), /lambda: got -1, expected λ ≥ 0/],
    ["L = 0", () => device(card, um, meters(0)), /device\.l: got 0, expected a channel length L > 0/],
    ['polarity "NMOS"', () => device({ ...card, polarity: "NMOS" as DeviceCard["polarity"] }, um, um), /polarity: got "NMOS", expected "nmos" or "pmos"/],
    ['kp as the string "1"', () => device({ ...card, kp: "1" as unknown as DeviceCard["kp"] }, um, um), /kp: got "1", expected a process transconductance/],
    ["W as a string", () => device(card, "1e-6" as unknown as Device["w"], um), /device\.w: got "1e-6"/],
    ["a gain kp·W/L that overflows", () => device({ ...card, kp: amperesPerVoltSquared(1e300) }, meters(1e10), meters(1e-10)), /finite device gain/],
    ["no card", () => device(null as unknown as DeviceCard, um, um), /device\.card: got null, expected a device card object/],
  ];
  for (const [what, run, message] of cases)
    it(what, () => {
      expect(run).toThrow(InputError);
      expect(run).toThrow(message);
    });
});

describe("the public entry points accept only validated devices", () => {
  it("drainCurrent refuses null and hand-built objects with a typed error, not a TypeError", () => {
    expect(() => drainCurrent(raw(null), 1, 1)).toThrow(InputError);
    expect(() => drainCurrent(raw(null), 1, 1)).toThrow(/drainCurrent\.dev: got null, expected a device made by device/);
    // Even a well-formed hand-built object: its fields were never checked.
    expect(() => drainCurrent(raw({ card, w: um, l: um }), 1, 1)).toThrow(/drainCurrent\.dev/);
  });
  it("operatingPoint and smallSignal validate a hand-built device and refuse a bad one", () => {
    const bad = raw({ card: { ...card, kp: NaN }, w: um, l: um });
    expect(() => operatingPoint(bad, bias)).toThrow(/operatingPoint\.dev\.card "val-n"\.kp: got NaN/);
    expect(() => smallSignal(raw({ card, w: meters(-1e-6), l: um }), bias)).toThrow(/smallSignal\.dev\.w: got -0\.000001/);
    expect(() => operatingPoint(raw(null), bias)).toThrow(/operatingPoint\.dev: got null/);
    expect(() => gateVoltageFor(raw({ card: { ...card, polarity: "NMOS" }, w: um, l: um }), amperes(1e-4))).toThrow(/polarity: got "NMOS"/);
    // A good hand-built device gives the same answer as one from device().
    const good = operatingPoint(raw({ card, w: um, l: um }), bias);
    expect(good.id).toBe(operatingPoint(device(card, um, um), bias).id);
  });
  it("a made device is frozen, deep, so its validated values cannot change afterwards", () => {
    const mutable = { ...card, temperature: { t0: 300 as never, alphaVt: -1e-3 as never, muExp: 1.5 } };
    const d = device(mutable, um, um);
    expect(Object.isFrozen(d) && Object.isFrozen(d.card) && Object.isFrozen(d.card.temperature)).toBe(true);
    expect(() => {
      (d as { w: number }).w = -1;
    }).toThrow(TypeError);
    // Changing the caller's card later does not reach the device.
    (mutable as { kp: number }).kp = NaN;
    expect(d.card.kp).toBe(200e-6);
    expect(Number.isFinite(drainCurrent(d, 1, 1))).toBe(true);
  });
  it("checkDevice returns a made device unchanged and validates a plain one into a new device", () => {
    const d = device(card, um, um);
    expect(checkDevice(d)).toBe(d);
    const plain = { card, w: um, l: um };
    const checked = checkDevice(plain);
    expect(checked).not.toBe(plain);
    expect(isDevice(checked) && !isDevice(plain)).toBe(true);
    expect(() => checkDevice({ card, w: um, l: meters(0) }, "cell 3")).toThrow(/cell 3\.l: got 0/);
  });
  it("the type system refuses a hand-built device", () => {
    // @ts-expect-error a { card, w, l } literal lacks the validated brand
    const d: Device = { card, w: um, l: um };
    expect(isDevice(d)).toBe(false);
  });
});
