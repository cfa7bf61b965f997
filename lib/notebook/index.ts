/** The "pinchoff/notebook" entry: helpers for tslab notebook cells. */
export * from "./display.js";
