/** Plots: figure builders (pure, plain numbers in, Plotly spec out) and their emitters. */
export * from "./figure.js";
export { plotPoint, type PlotPoint } from "./device-view.js";
export * from "./output-characteristics.js";
export * from "./transfer.js";
export * from "./transconductance.js";
export * from "./html.js";
export * from "./notebook.js";
export * from "./stage.js";
export * from "./pair.js";
export * from "./bode.js";
export { simulateFrequency, trySimulateFrequency, type SimulatedResponse } from "../bias/frequency-sim.js";
export { fitFigures, validityColours } from "./fit.js";
