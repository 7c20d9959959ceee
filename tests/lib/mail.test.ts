import nodemailer from "nodemailer";
import { describe, expect, it } from "vitest";

import { decodeHeader, finishedMail, firstLink, invitationMail, parseRawMail } from "@/lib/mail";

/** The exact bytes nodemailer would put on the wire for `mail` (its stream transport sends nothing). */
async function rawOf(mail: { to: string; subject: string; text: string }): Promise<string> {
  const t = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: "windows" });
  const info = await t.sendMail({ from: "Burstwise <burstwise@localhost>", ...mail });
  return (info.message as Buffer).toString("utf8");
}

describe("parseRawMail reads back what nodemailer writes", () => {
  it("an invitation with a long link and a non-ASCII lab name round-trips subject, text and link", async () => {
    const link = `http://127.0.0.1:3300/invite/${"A".repeat(43)}`;
    const mail = invitationMail({ to: "rhea@test.example", labName: "Bodenwächter – ü", role: "reviewer", invitedBy: "owner@test.example", link, expiresAt: new Date("2026-12-08T10:00:00Z") });
    const parsed = parseRawMail(await rawOf(mail));
    expect(parsed.subject).toBe("You are invited to Bodenwächter – ü on Burstwise");
    expect(parsed.to).toContain("rhea@test.example");
    expect(parsed.text).toBe(mail.text);
    expect(firstLink(parsed.text)).toBe(link);
  });

  it("a run e-mail names the run, the outcome and the link", async () => {
    const mail = finishedMail({ to: "m@test.example", kind: "run", title: "#12 (Ring timer v3, ssa)", status: "failed", error: "chunk 0 failed 4 times", link: "http://x/labs/1/runs/12", labName: "Soil Sentinel", key: "run-12.user-7" });
    expect(mail.messageId).toBe("<run-12.user-7@x.burstwise>"); // the same for every copy of this message
    const parsed = parseRawMail(await rawOf(mail));
    expect(parsed.subject).toBe("Burstwise: run #12 (Ring timer v3, ssa) failed");
    expect(parsed.text).toContain("Reason: chunk 0 failed 4 times");
    expect(firstLink(parsed.text)).toBe("http://x/labs/1/runs/12");
  });

  it("decodeHeader joins adjacent encoded words (RFC 2047 §6.2) and decodes Q and B", () => {
    expect(decodeHeader("=?UTF-8?Q?caf=C3=A9?= =?UTF-8?B?w7w=?=")).toBe("caféü");
    expect(decodeHeader("plain subject")).toBe("plain subject");
  });
});
