/**
 * pinchoff/units: quantities from text and to text, at the edges of the
 * numeric path. Importing this entry point does not load mathjs; the first
 * parse of a text with a unit does (see `unitEngineLoaded`).
 */
export { parseQuantity, parseAny, unitEngineLoaded, describeDimension, type AnyQuantity } from "./parse.js";
export { readSpiceNumber, spiceScaleFactors } from "./spice-number.js";
export { readValueCode, valueCodeLetters, type ValueCode, type ValueCodeDimension } from "./value-code.js";
export * from "./format.js";
// Card and design-file sections read from JSON with units.
export { parsePartCard, readPartCard } from "../bias/part-file.js";
export { parseToleranceSection } from "../bias/tolerance-file.js";
