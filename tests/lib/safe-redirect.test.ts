import { describe, expect, it } from "vitest";

import { toSafeRedirect } from "@/lib/view/safe-redirect";

describe("toSafeRedirect keeps redirects on the site", () => {
  // Each of these leaves the origin once a browser resolves it (WHATWG URL: "\" is "/" in http(s)
  // URLs, tabs and newlines are removed), so each falls back.
  it.each([
    "/\\evil.example", "/\\t/evil.example", "/\t/evil.example", "/\n/evil.example", "//evil.example", "https://evil.example",
    "\\\\evil.example", " //evil.example", "/.//evil.example", "/..//evil.example", "javascript:alert(1)",
    "data:text/html,hi", "", "x".repeat(3000),
  ])("%j falls back", (target) => {
    expect(toSafeRedirect(target, "/labs")).toBe("/labs");
  });

  it.each([
    ["/labs/12", "/labs/12"],
    ["/labs/12/runs?x=1#top", "/labs/12/runs?x=1#top"],
    ["/invite/abc", "/invite/abc"],
    ["labs", "/labs"], // relative: resolved against the site's root
    ["/a/../labs", "/labs"],
    // Same scheme as the base and no "//": a relative path, so it stays on the site.
    ["http:evil.example", "/evil.example"],
  ])("%j is kept as %j", (target, path) => {
    expect(toSafeRedirect(target, "/")).toBe(path);
  });

  it("an absolute URL on the app's own origin becomes its path; another port or scheme falls back", () => {
    expect(toSafeRedirect("http://127.0.0.1:3000/labs/3", "/", "http://127.0.0.1:3000")).toBe("/labs/3");
    expect(toSafeRedirect("http://127.0.0.1:3001/labs/3", "/", "http://127.0.0.1:3000")).toBe("/");
    expect(toSafeRedirect("https://127.0.0.1:3000/labs/3", "/", "http://127.0.0.1:3000")).toBe("/");
  });

  it("non-strings fall back", () => {
    expect(toSafeRedirect(undefined)).toBe("/labs");
    expect(toSafeRedirect(["/labs/1"])).toBe("/labs");
  });
});
