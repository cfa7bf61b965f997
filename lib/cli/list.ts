/** pinchoff list: the template notebooks, one line each. */
import { parseArgs } from "node:util";
import { listTemplates } from "../templates.js";

export async function main(argv: string[]): Promise<number> {
  const { values } = parseArgs({ args: argv, options: { help: { type: "boolean", short: "h" } } });
  if (values.help) {
    console.log("usage: pinchoff list\n\nLists the template notebooks for pinchoff new, with a one-line description each.");
    return 0;
  }
  const all = listTemplates();
  if (!all.length) {
    console.log("no templates installed");
    return 0;
  }
  const w = Math.max(...all.map((t) => t.name.length));
  for (const t of all) console.log(`${t.name.padEnd(w)}  ${t.description}`);
  return 0;
}
