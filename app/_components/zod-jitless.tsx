"use client";
/**
 * Turns off zod's compiled fast path in the browser. zod probes for it with `Function("")` the first
 * time an object schema parses, which the content security policy (no 'unsafe-eval',
 * lib/content-security-policy.ts) blocks and reports as a violation. This module runs before any
 * page code parses (the root layout renders it), so the probe never happens.
 */
import { z } from "zod";

z.config({ jitless: true });

export function ZodJitless(): null {
  return null;
}
