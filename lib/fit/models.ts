/** The device models the fitter knows, by the id `pinchoff fit --model` takes. */
import type { FitModel } from "./model.js";
import { squareLawFit } from "./square-law.js";

export const fitModels: Readonly<Record<string, FitModel>> = {
  "square-law": squareLawFit,
};
