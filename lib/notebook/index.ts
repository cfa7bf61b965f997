/** The "pinchoff/notebook" entry: helpers for tslab notebook cells. */
export * from "./display.js";
export * from "../plot/index.js";
export * from "./inputs.js";
