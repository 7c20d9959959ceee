import { spawn } from "node:child_process";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import { deriveClientAddress } from "@/lib/auth/client-address";

describe("deriveClientAddress believes only what trusted proxies added", () => {
  it("no trusted proxy: the one address Next.js put there (the socket's)", () => {
    expect(deriveClientAddress("127.0.0.1", 0)).toBe("127.0.0.1");
    expect(deriveClientAddress("::ffff:10.1.2.3", 0)).toBe("10.1.2.3");
    expect(deriveClientAddress(undefined, 0)).toBe("unknown");
  });

  it("one trusted proxy: the address it appended, whatever the client claimed before it", () => {
    expect(deriveClientAddress("203.0.113.9", 1)).toBe("203.0.113.9");
    expect(deriveClientAddress("1.1.1.1, 2.2.2.2, 203.0.113.9", 1)).toBe("203.0.113.9");
  });

  it("two trusted proxies: the second entry from the right", () => {
    expect(deriveClientAddress("6.6.6.6, 203.0.113.9, 10.0.0.2", 2)).toBe("203.0.113.9");
    // Fewer entries than proxies (a misconfiguration): the leftmost, never "unknown" for all.
    expect(deriveClientAddress("203.0.113.9", 2)).toBe("203.0.113.9");
  });
});

/** What X-Forwarded-For an HTTP server started under the preload sees for a request that sends `sent`. */
function seenForwardedFor(hops: string, sent: string): Promise<string> {
  const script = `
    const http = require("node:http");
    const s = http.createServer((req, res) => { res.end(String(req.headers["x-forwarded-for"] ?? "(none)")); });
    s.listen(0, "127.0.0.1", async () => {
      const r = await fetch("http://127.0.0.1:" + s.address().port, { headers: { "x-forwarded-for": ${JSON.stringify(sent)} } });
      console.log(await r.text()); s.close();
    });`;
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--require", join(process.cwd(), "scripts/client-address.cjs"), "-e", script], {
      env: { ...process.env, BURSTWISE_TRUSTED_PROXY_HOPS: hops }, stdio: ["ignore", "pipe", "inherit"],
    });
    let out = "";
    child.stdout.on("data", (d) => (out += d));
    child.on("exit", (code) => (code === 0 ? resolve(out.trim()) : reject(new Error(`exit ${code}`))));
  });
}

describe("scripts/client-address.cjs (preloaded into the web app)", () => {
  it("drops a client's own X-Forwarded-For when no proxy is trusted", async () => {
    expect(await seenForwardedFor("0", "6.6.6.6")).toBe("(none)");
  });
  it("leaves it to the trusted proxy's entries otherwise", async () => {
    expect(await seenForwardedFor("1", "6.6.6.6")).toBe("6.6.6.6");
  });
});
