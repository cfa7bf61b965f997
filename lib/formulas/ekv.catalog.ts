/**
 * The EKV all-region MOSFET model, charge-based and continuous from weak through
 * strong inversion, in the device's own polarity (magnitudes for a PMOS). Core:
 * Enz, Krummenacher & Vittoz, "An analytical MOS transistor model valid in all
 * regions of operation and dedicated to low-voltage and low-current applications",
 * Analog Integrated Circuits and Signal Processing 8(1), 83–114, 1995. Velocity
 * saturation, mobility degradation and the equivalent length as in the EPFL-EKV
 * 2.6 equations (Bucher, Lallement, Enz, Théodoloz & Krummenacher, EPFL technical
 * report, 1999), stated from memory, with these choices:
 * - the normalised charge at each end of the channel solves 2q + ln q = (VP − V)/UT exactly (the charge-based EKV of
 *   Enz & Vittoz 2006), and the current is i = q² + q, in place of the 1995 interpolation i = ln²(1 + e^(v/2)), which
 *   is the same in weak inversion but 21 % below it at VP = VS and 13 % above it half a volt higher. Fitted to the open 180 nm measurements (test/fit-pdk180.test.ts) the interpolation left the
 *   low-VDS transfer curves 10–18 % high there (NMOS L = 0.5 µm: RMS 4.8 %, 95th percentile 10.6 %); the charge
 *   relation gives 4.4 % and 8.9 %, and lowers the RMS at every NMOS length and the PMOS L ≤ 0.5 µm;
 * - the 2.6 smoothing ΔV = 4·UT·√(LAMBDA·(…) + 1/64) is taken at LAMBDA = 0, ΔV = UT/2;
 *   channel-length modulation is instead the factor (1 + λ·VDS) of SPICE Level 1;
 * - the equivalent length uses the same saturation voltage VDSS' as the reverse current;
 * - a threshold lowering σ·VDS (drain-induced barrier lowering) shifts the effective gate voltage;
 * - mobility degradation acts on the channel's mean inversion charge n·UT·(qf + qr) (≈ VOV in strong
 *   inversion at low VDS, about half of it in saturation, where the drain end is pinched off) and on VSB (θB, the depletion charge raising the vertical field) rather than on VP:
 *   with θ·VP a scratch fit to the measured 180 nm NMOS (L = 1 µm) stayed at 7.5 % RMS, the
 *   transfer curves under reverse body bias off by up to 18 %; with θ and θB it reached 4.7 %;
 * - interface traps add Cit/Cox to the slope factor in weak inversion only (pinchoff's choice): the
 *   normalising voltage of the charges and currents is UT·(1 + Cit/Cox / n), which makes the
 *   weak-inversion slope (n + Cit/Cox)·UT·ln10 per decade and leaves the threshold, its body effect,
 *   VDSS' and the strong-inversion current as they were, but for the charge-sheet term Um·ln q (< 1 % of the current; a Cit/Cox inside VP would also steepen the
 *   threshold's rise with VSB, which the 180 nm data refuse). With n tied to γ and 2φF, one (γ, 2φF)
 *   pair could not give both the 180 nm devices' body effect and their subthreshold slope
 *   (weak-inversion RMS error 13–33 %); with Cit/Cox fitted (0.10–0.23) it fell to 6–14 %.
 * Terminal voltages are source-referenced here (VGB = VGS + VSB, VS = VSB, VD = VDS + VSB).
 */
import { defineCompositions, defineFormulas, defineSymbols } from "./define.js";

const ekv95 = "Enz, Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8(1), 83–114, 1995";
const ekv26 = "EPFL-EKV 2.6, Bucher et al., EPFL technical report, 1999 (from memory)";
const chargeBased =
  "charge–voltage relation 2q + ln q = (VP − V)/UT of the charge-based EKV model (Enz & Vittoz, Charge-Based MOS Transistor Modeling: The EKV Model for Low-Power and RF IC Design, Wiley, 2006, from memory; the same relation as the ACM model, Cunha, Schneider & Galup-Montoro, IEEE JSSC 33(10), 1510–1519, 1998)";

export const symbols = defineSymbols({
  VGS: { tex: "V_{GS}", dim: "voltage", meaning: "gate-source voltage" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  VSB: { tex: "V_{SB}", dim: "voltage", meaning: "source-body voltage" },
  Vt0: { tex: "V_{t0}", dim: "voltage", meaning: "zero-bias threshold voltage" },
  gamma: { tex: "\\gamma", dim: "sqrtVoltage", meaning: "body-effect coefficient" },
  phi: { tex: "2\\phi_{F}", dim: "voltage", meaning: "surface potential at strong inversion" },
  kp: { tex: "k'", dim: "transconductanceParameter", meaning: "process transconductance parameter µ·Cox" },
  W: { tex: "W", dim: "length", meaning: "channel width" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  lambda: { tex: "\\lambda", dim: "inverseVoltage", meaning: "channel-length modulation coefficient" },
  theta: { tex: "\\theta", dim: "inverseVoltage", meaning: "mobility degradation coefficient" },
  thetaB: { tex: "\\theta_{B}", dim: "inverseVoltage", meaning: "mobility degradation with source-body voltage" },
  Ecrit: { tex: "E_{sat}", dim: "electricField", meaning: "critical field for velocity saturation" },
  sigma: { tex: "\\sigma", dim: "dimensionless", meaning: "drain-induced threshold lowering coefficient" },
  cit: { tex: "C_{it}/C_{ox}", dim: "dimensionless", meaning: "interface-trap capacitance over oxide capacitance (adds to the weak-inversion slope factor)" },
  Um: { tex: "U_{T}^{*}", dim: "voltage", meaning: "normalising voltage of the EKV charges and currents, UT·(1 + Cit/Cox / n)" },
  UT: { tex: "U_{T}", dim: "voltage", meaning: "thermal voltage kT/q" },
  n: { tex: "n", dim: "dimensionless", meaning: "subthreshold slope factor" },
  IC: { tex: "IC", dim: "dimensionless", meaning: "inversion coefficient IF/IS (forward over specific current)" },
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  VGp: { tex: "V_{G}'", dim: "voltage", meaning: "effective gate voltage (EKV)" },
  VP: { tex: "V_{P}", dim: "voltage", meaning: "pinch-off voltage (EKV)" },
  IRn: { tex: "i_{r}", dim: "dimensionless", meaning: "reverse normalised current IR/IS (EKV)" },
  VDSSL: { tex: "V_{DSS,\\infty}'", dim: "voltage", meaning: "saturation voltage VDSS' of a long channel, no velocity saturation (EKV)" },
  VDSS: { tex: "V_{DSS}'", dim: "voltage", meaning: "saturation voltage of the normalised drain-source voltage (EKV)" },
  Vip: { tex: "V_{ip}", dim: "voltage", meaning: "half drain-source voltage, smoothly limited at VDSS' (EKV)" },
  Leq: { tex: "L_{eq}", dim: "length", meaning: "equivalent channel length with velocity saturation (EKV)" },
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  VDsat: { tex: "V_{D,sat}", dim: "voltage", meaning: "drain-source saturation voltage" },
  qF: { tex: "q_{f}", dim: "dimensionless", meaning: "normalised inversion charge at the source (EKV)" },
  qR: { tex: "q_{r}", dim: "dimensionless", meaning: "normalised inversion charge at the drain end, saturating at VDSS' (EKV)" },
  beta: { tex: "\\beta", dim: "transconductanceParameter", meaning: "gain factor k'·W/Leq with mobility degradation (EKV)" },
  IS: { tex: "I_{S}", dim: "current", meaning: "specific current 2·n·β·UT² (EKV)" },
});

export const formulas = defineFormulas({
  ekvNormalisingVoltage: {
    title: "Normalising voltage of the charges and currents",
    // Cit/Cox = 0 is EKV proper. Otherwise the weak-inversion slope is (n + Cit/Cox)·UT·ln10 per decade, while the
    // threshold and VDSS' do not move and the strong-inversion current 2·n·β·Um²·(q² + q) ≈ n·β/2·(VP − VS − Um·ln q)²
    // moves only by its charge-sheet term Um·ln q.
    result: "Um",
    expr: "UT * (1 + cit / n)",
    source: "slope factor n + Cit/Cox with interface traps (Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., 2011, from memory), applied through the EKV normalisation only (pinchoff's choice, not in EKV 2.6)",
  },
  ekvThreshold: {
    title: "Threshold (VP = VS), with body effect and drain-induced lowering",
    // Solving VP(VG) = VS with the pinch-off voltage below gives this exactly.
    result: "Vt",
    expr: "Vt0 + gamma * (sqrt(phi + VSB) - sqrt(phi)) - sigma * VDS",
    source: ekv95,
  },
  ekvDrainSaturationVoltage: {
    title: "Drain-source saturation voltage, all regions",
    // 2·VDSS of EKV 2.6 (→ VP − VS in strong inversion, lowered by velocity saturation) plus the
    // 4·UT a weakly inverted channel needs to saturate (common practice).
    result: "VDsat",
    expr: "2 * Um * sqrt(IC) / (sqrt(1 / 4 + Um * sqrt(IC) / (Ecrit * L)) + 1 / 2) + 4 * Um",
    source: ekv26,
  },
  ekvEffectiveGate: {
    title: "Effective gate voltage",
    result: "VGp",
    expr: "VGS + VSB - Vt0 + sigma * VDS + phi + gamma * sqrt(phi)",
    source: ekv26,
  },
  ekvPinchOffVoltage: {
    title: "Pinch-off voltage (VG' > 0)",
    result: "VP",
    expr: "VGp - phi - gamma * (sqrt(VGp + gamma^2 / 4) - gamma / 2)",
    source: ekv95,
  },
  ekvPinchOffFloor: {
    title: "Pinch-off voltage (VG' ≤ 0)",
    // The channel holds no charge below VG' = 0, as in EKV 2.6; VP and dVP/dVG' are continuous with the form above there.
    result: "VP",
    expr: "-phi",
    source: ekv26,
  },
  ekvSlopeFactor: {
    title: "Slope factor",
    result: "n",
    expr: "1 + gamma / (2 * sqrt(VP + phi + 4 * UT))",
    source: ekv26,
  },
  ekvForwardCharge: {
    title: "Normalised inversion charge at the source",
    // 2·qf + ln qf = (VP − VS)/Um solved through the Wright ω function (lib/numeric/wright-omega.ts): ω(y) + ln ω(y) = y.
    result: "qF",
    expr: "wrightOmega((VP - VSB) / Um + log(2)) / 2",
    source: chargeBased,
  },
  ekvForwardCurrent: {
    title: "Forward normalised current (inversion coefficient)",
    result: "IC",
    expr: "qF^2 + qF",
    source: ekv95,
  },
  ekvChargeAtInversion: {
    title: "Normalised inversion charge at an inversion coefficient",
    // The inverse of IC = q² + q: where a given inversion level sits on the charge relation (region edges of a fit).
    result: "qF",
    expr: "sqrt(1 / 4 + IC) - 1 / 2",
    source: ekv95,
  },
  ekvOverdriveAtCharge: {
    title: "Overdrive at a source-end charge",
    // The charge relation 2q + ln q = (VP − VS)/UT with VP − VS ≈ VOV/n (VP ≈ (VG − Vt0)/n): the overdrive of an inversion level.
    result: "VOV",
    expr: "n * UT * (2 * qF + log(qF))",
    source: chargeBased,
  },
  ekvLongChannelSaturationVoltage: {
    title: "Saturation voltage for the reverse current, long channel",
    // Stated apart so the velocity-saturated form below takes √IC and ln IC once.
    result: "VDSSL",
    expr: "Um * (sqrt(IC) - 3 / 4 * log(IC))",
    source: ekv26,
  },
  ekvSaturationVoltage: {
    title: "Saturation voltage for the reverse current, with velocity saturation",
    // VC·(√(1/4 + x/VC) − 1/2) rationalised to x/(√(1/4 + x/VC) + 1/2), VC = Esat·L: exact and free of cancellation for long channels.
    result: "VDSS",
    expr: "VDSSL / (sqrt(1 / 4 + VDSSL / (Ecrit * L)) + 1 / 2) + Um * (log(Ecrit * L / (2 * Um)) - 0.6)",
    source: ekv26,
  },
  ekvLimitedDrainVoltage: {
    title: "Half drain-source voltage limited at VDSS'",
    // ≈ VDS/2 well below VDSS', → 2·VDSS' − VDS/2 well above it, smooth over ΔV = UT/2 between.
    result: "Vip",
    expr: "sqrt(VDSS^2 + Um^2 / 4) - sqrt((VDS / 2 - VDSS)^2 + Um^2 / 4)",
    source: ekv26,
  },
  ekvReverseCharge: {
    title: "Normalised inversion charge at the drain end, saturating at VDSS'",
    // The drain-end voltage VS + VDS/2 + Vip (→ VD well below VDSS', held near VS + 2·VDSS' above it) of EKV 2.6.
    result: "qR",
    expr: "wrightOmega((VP - VSB - VDS / 2 - Vip) / Um + log(2)) / 2",
    source: `${chargeBased}; the saturating drain voltage of ${ekv26}`,
  },
  ekvReverseCurrent: {
    title: "Reverse normalised current",
    result: "IRn",
    expr: "qR^2 + qR",
    source: ekv95,
  },
  ekvEquivalentLength: {
    title: "Equivalent channel length with velocity saturation",
    result: "Leq",
    expr: "L + (VDS / 2 + Vip) / Ecrit",
    source: ekv26,
  },
  ekvGainFactor: {
    title: "Gain factor with mobility degradation",
    // n·Um·(qf + qr) is the mean of the source- and drain-end inversion charges as a voltage: ≈ VOV in strong inversion
    // at low VDS, ≈ VOV/2 in saturation, → 0 in weak inversion. With the source-end charge alone (the same in triode and
    // saturation) the fitted open 180 nm devices were as good or up to 0.4 points of RMS worse at every L (test/fit-pdk180.test.ts).
    result: "beta",
    expr: "kp * W / Leq / (1 + theta * n * Um * (qF + qR) + thetaB * VSB)",
    source: "mobility degradation µ0/(1 + θ·VOV + θB·VSB) (Tsividis & McAndrew, 3rd ed., 2011, from memory) with VOV as the mean of the EKV source- and drain-end charges, n·UT·(qf + qr) (pinchoff's choice); EKV 2.6 uses θ·VP instead",
  },
  ekvSpecificCurrent: {
    title: "Specific current",
    result: "IS",
    expr: "2 * n * beta * Um^2",
    source: ekv95,
  },
  ekvDrainCurrent: {
    title: "Drain current, all regions",
    result: "ID",
    expr: "IS * (IC - IRn) * (1 + lambda * VDS)",
    source: ekv95,
  },
});

/** The hot path, generated from the formulas above (lib/formulas/generate.ts); terminal voltages in device polarity, VDS ≥ 0. */
const pinchOff = [
  "ekvEffectiveGate",
  { when: "VGp > 0", then: "ekvPinchOffVoltage", otherwise: "ekvPinchOffFloor" },
  "ekvSlopeFactor",
  "ekvNormalisingVoltage",
  "ekvForwardCharge",
  "ekvForwardCurrent",
] as const;

export const compositions = defineCompositions({
  ekvChannelCurrent: {
    title: "EKV channel current for VDS ≥ 0 in device polarity (0 where the forward current underflows)",
    inputs: ["kp", "W", "L", "Vt0", "gamma", "phi", "lambda", "theta", "thetaB", "Ecrit", "sigma", "cit", "UT", "VGS", "VDS", "VSB"],
    pointInputs: ["VGS", "VDS", "VSB"],
    steps: [
      ...pinchOff,
      { returnWhen: "IC == 0", value: 0, why: "a source tens of volts above the pinch-off voltage: the channel carries nothing" },
      "ekvLongChannelSaturationVoltage",
      "ekvSaturationVoltage",
      "ekvLimitedDrainVoltage",
      "ekvReverseCharge",
      "ekvReverseCurrent",
      "ekvEquivalentLength",
      "ekvGainFactor",
      "ekvSpecificCurrent",
      "ekvDrainCurrent",
    ],
  },
  ekvInversionCoefficient: {
    title: "EKV inversion coefficient IF/IS for VDS ≥ 0 in device polarity",
    inputs: ["Vt0", "gamma", "phi", "sigma", "cit", "UT", "VGS", "VDS", "VSB"],
    steps: pinchOff,
  },
});
