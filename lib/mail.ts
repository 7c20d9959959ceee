import nodemailer, { type Transporter } from "nodemailer";

import { env } from "@/lib/env";

/**
 * Outgoing e-mail through nodemailer over SMTP (SMTP_URL). `npm start` and `npm test` point
 * SMTP_URL at the local mail fake (scripts/mail-fake.ts); without SMTP_URL nothing is sent.
 */
export interface OutgoingMail {
  to: string; subject: string; text: string;
  /** A fixed Message-ID, so that a message sent twice (a sender that died before recording it) reads as one to mail clients. */
  messageId?: string;
}
export type MailResult = { status: "sent"; messageId: string } | { status: "disabled" } | { status: "failed"; error: string };

const cache = globalThis as { burstwiseMail?: Transporter };

function transport(): Transporter | null {
  if (!env.SMTP_URL) return null;
  // Short timeouts: a dead mail server must not hold a request or a worker for minutes.
  cache.burstwiseMail ??= nodemailer.createTransport({ url: env.SMTP_URL, connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 20_000 });
  return cache.burstwiseMail;
}

/** Whether SMTP is configured (otherwise invitation links are shown to the owner instead). */
export const isMailConfigured = (): boolean => Boolean(env.SMTP_URL);

/** Whether the local mail fake runs (its inbox page /dev/mail is on): never in a production deployment. */
export const isMailFakeEnabled = (): boolean => env.MAIL_FAKE === "1" && env.BURSTWISE_DEPLOYMENT === "local";

/**
 * Sends one plain-text message. Never throws: a refused or unreachable server is
 * `{ status: "failed", error }` (logged), so the caller decides what a lost e-mail means.
 */
export async function sendMail(mail: OutgoingMail): Promise<MailResult> {
  const t = transport();
  if (!t) return { status: "disabled" };
  try {
    const info = await t.sendMail({ from: env.MAIL_FROM, to: mail.to, subject: mail.subject, text: mail.text, ...(mail.messageId ? { messageId: mail.messageId } : {}) });
    return { status: "sent", messageId: String(info.messageId ?? "") };
  } catch (e) {
    const error = e instanceof Error ? e.message : String(e);
    console.error(`[mail] to ${mail.to} "${mail.subject}": ${error}`);
    return { status: "failed", error };
  }
}

/** The app's public address for links in e-mails (NEXTAUTH_URL), without a trailing slash. */
export function appUrl(): string {
  return (env.NEXTAUTH_URL ?? "http://127.0.0.1:3000").replace(/\/+$/, "");
}

/** The invitation e-mail. `link` carries the one-time token. */
export function invitationMail(p: { to: string; labName: string; role: string; invitedBy: string; link: string; expiresAt: Date }): OutgoingMail {
  return {
    to: p.to,
    subject: `You are invited to ${p.labName} on Burstwise`,
    text: [
      `${p.invitedBy} invites you to join the lab "${p.labName}" on Burstwise as ${p.role}.`,
      "",
      "Open this link to accept (it works once):",
      p.link,
      "",
      `The link expires on ${p.expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC.`,
      "If you have no Burstwise account yet, the page lets you create one with this address.",
      "If you did not expect this invitation, ignore this message.",
    ].join("\n"),
  };
}

/**
 * To the owner of an address someone tried to sign up with again: the sign-up answer is the
 * same as for a new address (it must not tell who has an account), so the news goes here.
 */
export function signUpAttemptMail(p: { to: string; signInLink: string }): OutgoingMail {
  return {
    to: p.to,
    subject: "Someone tried to create a Burstwise account with your address",
    text: [
      `Someone tried to create a new Burstwise account for ${p.to}, which already has one.`,
      "Nothing was changed: your account, password and labs are as they were.",
      "",
      "If it was you, sign in with your existing password:",
      p.signInLink,
      "",
      "If it was not you, you can ignore this message.",
    ].join("\n"),
  };
}

/**
 * To a user whose password was just changed: if it was not them, someone who knew the old
 * password is in their account, and this is how they find out.
 */
export function passwordChangedMail(p: { to: string; when: Date; accountLink: string }): OutgoingMail {
  return {
    to: p.to,
    subject: "Your Burstwise password was changed",
    text: [
      `The password of the Burstwise account ${p.to} was changed on ${p.when.toISOString().slice(0, 16).replace("T", " ")} UTC.`,
      "Every other browser signed in to the account was signed out. Personal API tokens were not revoked;",
      "you can review and revoke them on your account page:",
      p.accountLink,
      "",
      "If you did not change it, someone who knew your password did: change it again at once and revoke your tokens.",
    ].join("\n"),
  };
}

/** The e-mail for a finished run or comparison (generic: subject kind, title, status, link). */
export function finishedMail(p: {
  to: string; kind: string; title: string; status: string; error?: string | null; link: string; labName: string;
  /** The one message a recipient gets about a subject: e.g. run-12.user-7, made into the Message-ID. */
  key: string;
}): OutgoingMail {
  const outcome = p.status === "succeeded" ? "finished" : p.status;
  return {
    to: p.to,
    messageId: `<${p.key}@${new URL(p.link).hostname || "burstwise"}.burstwise>`,
    subject: `Burstwise: ${p.kind} ${p.title} ${outcome}`,
    text: [
      `Your ${p.kind} ${p.title} in ${p.labName} ${outcome}.`,
      ...(p.error ? ["", `Reason: ${p.error}`] : []),
      "",
      `See it at ${p.link}`,
      "",
      "You get this because you asked for run e-mails on the Lab page; change that there.",
    ].join("\n"),
  };
}

// ---- Reading messages (the mail fake stores what it receives; tests and /dev/mail read it) ----

export interface ParsedMail { from: string; to: string; subject: string; text: string }

function splitHeaders(raw: string): { headers: Map<string, string>; body: string } {
  const at = raw.search(/\r?\n\r?\n/);
  const head = at < 0 ? raw : raw.slice(0, at);
  const body = at < 0 ? "" : raw.slice(at).replace(/^\r?\n\r?\n/, "");
  const headers = new Map<string, string>();
  // Folded header lines continue with whitespace (RFC 5322 §2.2.3).
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const i = line.indexOf(":");
    if (i > 0) headers.set(line.slice(0, i).trim().toLowerCase(), line.slice(i + 1).trim());
  }
  return { headers, body };
}

function decodeQuotedPrintable(s: string): Buffer {
  const soft = s.replace(/=\r?\n/g, "");
  const bytes: number[] = [];
  for (let i = 0; i < soft.length; i++) {
    const c = soft[i]!;
    if (c === "=" && /^[0-9A-Fa-f]{2}$/.test(soft.slice(i + 1, i + 3))) {
      bytes.push(parseInt(soft.slice(i + 1, i + 3), 16));
      i += 2;
    } else bytes.push(...Buffer.from(c, "utf8"));
  }
  return Buffer.from(bytes);
}

function decodeBody(body: string, encoding: string | undefined): string {
  const enc = (encoding ?? "7bit").toLowerCase();
  if (enc === "base64") return Buffer.from(body.replace(/\s+/g, ""), "base64").toString("utf8");
  if (enc === "quoted-printable") return decodeQuotedPrintable(body).toString("utf8");
  return body;
}

/** RFC 2047 encoded words (`=?UTF-8?Q?...?=` / `?B?`) in a header. */
export function decodeHeader(value: string): string {
  // Whitespace between two encoded words is not part of the text (RFC 2047 §6.2).
  return value.replace(/(\?=)\s+(?==\?)/g, "$1").replace(/=\?([^?]+)\?([QqBb])\?([^?]*)\?=/g, (_m, _cs: string, enc: string, text: string) =>
    enc.toUpperCase() === "B" ? Buffer.from(text, "base64").toString("utf8") : decodeQuotedPrintable(text.replace(/_/g, " ")).toString("utf8"));
}

function firstTextPart(headers: Map<string, string>, body: string): string {
  const type = headers.get("content-type") ?? "text/plain";
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  if (/^multipart\//i.test(type) && boundary) {
    for (const part of body.split(`--${boundary}`).slice(1)) {
      if (part.startsWith("--")) break;
      const p = splitHeaders(part.replace(/^\r?\n/, ""));
      const text = firstTextPart(p.headers, p.body);
      if (text) return text;
    }
    return "";
  }
  return /^text\/plain/i.test(type) ? decodeBody(body, headers.get("content-transfer-encoding")).replace(/\r\n/g, "\n").trimEnd() : "";
}

/** Subject, addresses and the plain-text body of a raw RFC 5322 message. */
export function parseRawMail(raw: string): ParsedMail {
  const { headers, body } = splitHeaders(raw);
  return {
    from: decodeHeader(headers.get("from") ?? ""), to: decodeHeader(headers.get("to") ?? ""),
    subject: decodeHeader(headers.get("subject") ?? ""), text: firstTextPart(headers, body),
  };
}

/** The first http(s) link in a text, e.g. the invitation link in an e-mail. */
export const firstLink = (text: string): string | null => /https?:\/\/\S+/.exec(text)?.[0] ?? null;
