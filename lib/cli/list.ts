/** pinchoff list: the template notebooks, one line each. */
import { listTemplates } from "../templates.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "list",
  positionals: [],
  options: {},
  description: "Lists the template notebooks for pinchoff new, with a one-line description each.",
} as const satisfies CommandSpec;

export const main = defineCommand(command, async () => {
  const all = listTemplates();
  if (!all.length) {
    console.log("no templates installed");
    return 0;
  }
  const w = Math.max(...all.map((t) => t.name.length));
  for (const t of all) console.log(`${t.name.padEnd(w)}  ${t.description}`);
  return 0;
});
