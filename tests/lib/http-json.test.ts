import { describe, expect, it } from "vitest";

import { HttpError, jsonDepthExceeds, MAX_JSON_DEPTH, parseJsonText, requireCleanText } from "@/lib/http";

const nestedObject = (d: number, leaf = "1") => '{"a":'.repeat(d) + leaf + "}".repeat(d);
const nestedArray = (d: number) => "[".repeat(d) + "]".repeat(d);

function refusal(f: () => unknown): HttpError {
  try {
    f();
  } catch (e) {
    if (e instanceof HttpError) return e;
    throw e;
  }
  throw new Error("expected a refusal");
}

describe("JSON bodies: nesting is bounded before parsing", () => {
  it("counts the depth of arrays and objects, not of brackets inside strings", () => {
    expect(jsonDepthExceeds(nestedArray(MAX_JSON_DEPTH))).toBe(false);
    expect(jsonDepthExceeds(nestedArray(MAX_JSON_DEPTH + 1))).toBe(true);
    expect(jsonDepthExceeds(nestedObject(MAX_JSON_DEPTH + 1))).toBe(true);
    // brackets in a string, and an escaped quote that does not end it
    expect(jsonDepthExceeds(JSON.stringify({ s: "[".repeat(500) + '\\"' + "{".repeat(500) }))).toBe(false);
    expect(jsonDepthExceeds(`["\\\\", ${nestedArray(MAX_JSON_DEPTH)}]`)).toBe(true);
  });

  it("refuses a body nested past the limit with a message naming the field", () => {
    const e = refusal(() => parseJsonText(nestedObject(20_000), "body"));
    expect(e.status).toBe(400);
    expect(e.message).toBe(`body: nested deeper than ${MAX_JSON_DEPTH} levels of arrays and objects`);
    const f = refusal(() => parseJsonText(nestedArray(100), "file", 422));
    expect(f.status).toBe(422);
    expect(f.message).toMatch(/^file: nested deeper/);
    expect(refusal(() => parseJsonText("{", "body")).message).toBe("body: not valid JSON");
    expect(parseJsonText(nestedObject(MAX_JSON_DEPTH), "body")).toBeTypeOf("object");
  });

  it("walks a value nested 20,000 deep without overflowing the stack, and names a bad string by its full path", () => {
    expect(() => requireCleanText(JSON.parse(nestedArray(20_000)))).not.toThrow();
    // and a bad string deep down is still named by its full path
    const bad = JSON.parse(nestedObject(30, '"x\\u0000"'));
    const e = refusal(() => requireCleanText(bad));
    expect(e.message).toBe(`${Array(30).fill("a").join(".")}: contains a NUL character (U+0000) at character 1; text may not contain NUL`);
  });
});
