/**
 * `pinchoff/fit`: measured data in and models fitted to it. A separate entry
 * point because reading CSV loads csv-parse, which the numeric core does not need.
 */
export * from "../measure/read.js";
export * from "../measure/select.js";
export * from "../measure/builtin.js";
export * from "./accuracy.js";
export * from "./adapter.js";
export * from "./fit.js";
export * from "./levenberg-marquardt.js";
export * from "./model.js";
export * from "./models.js";
export * from "./start.js";
export * from "./temperature.js";
export * from "./geometry.js";
