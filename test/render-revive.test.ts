import { describe, expect, it } from "vitest";
import { renderJson, reviveDerivation, renderHtmlFragment, renderText } from "../lib/record/render.js";
import { InputError, PinchoffError } from "../lib/errors.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";

describe("reading a derivation back from JSON", () => {
  it("round-trips renderJson exactly, infinities included", () => {
    const d = fixtureDerivation();
    const back = reviveDerivation(JSON.parse(renderJson(d)), "test.json");
    expect(back).toEqual(d.toJSON());
    expect(back.checks[2]!.value).toBe(Infinity);
    expect(renderText(back)).toBe(renderText(d));
  });

  it("names the first bad field with a typed error", () => {
    const j = JSON.parse(renderJson(fixtureDerivation())) as { steps: Array<{ result: { value: unknown } }> };
    j.steps[1]!.result.value = "fast";
    expect(() => reviveDerivation(j, "cell 4")).toThrow(InputError);
    expect(() => reviveDerivation(j, "cell 4")).toThrow(/cell 4\.steps\[1\]\.result\.value: got "fast", expected a number/);
    expect(() => reviveDerivation({ ...j, schemaVersion: 99 }, "x")).toThrow(PinchoffError);
    expect(() => reviveDerivation({ ...j, schemaVersion: 99 }, "x")).toThrow(/newer than this pinchoff reads/);
  });

  it("renderers take a live Derivation too, and refuse an empty design", () => {
    const d = fixtureDerivation();
    expect(renderHtmlFragment(d)).toBe(renderHtmlFragment(d.toJSON()));
    expect(() => renderText([])).toThrow(/at least one derivation/);
    expect(() => renderText({ title: "x" } as never)).toThrow(InputError);
  });
});
