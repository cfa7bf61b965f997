/** The device models the fitter knows, by the id `pinchoff fit --model` takes (the card's `model`). */
import { models } from "../device/models/index.js";
import { fitModelOf } from "./adapter.js";
import type { FitModel } from "./model.js";

export const fitModels: Readonly<Record<string, FitModel>> = Object.fromEntries(Object.values(models).map((m) => [m.id, fitModelOf(m)]));

/** The square law (SPICE Level 1) as a fit model. */
export const squareLawFit: FitModel = fitModels["square-law"]!;
export const ekvFit: FitModel = fitModels["ekv"]!;
