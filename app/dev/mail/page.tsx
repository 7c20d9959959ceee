import type { Metadata } from "next";
import { notFound } from "next/navigation";

import { Logo } from "@/app/_components/logo";
import { requirePageUser } from "@/lib/auth/page";
import { listFakeMailFor } from "@/lib/data/notifications";
import { isMailFakeEnabled } from "@/lib/mail";

export const metadata: Metadata = { title: "Mail fake inbox" };
export const dynamic = "force-dynamic";

const LINK = /(https?:\/\/[^\s]+)/g;

/**
 * The local mail fake's inbox (local deployments only): what the app "sent" to the signed-in
 * user's own address, newest first. Nobody sees anyone else's mail.
 */
export default async function DevMailPage() {
  if (!isMailFakeEnabled()) notFound();
  const user = await requirePageUser("/dev/mail");
  const messages = user.email ? await listFakeMailFor(user.email, 100) : [];
  return (
    <main className="mx-auto flex max-w-4xl flex-col gap-6 px-6 py-10">
      <Logo className="text-xl" />
      <div>
        <h1 className="text-2xl font-semibold">Mail fake inbox</h1>
        <p className="mt-1 text-sm text-ink-soft">
          In a local deployment Burstwise sends e-mail to a local SMTP fake that delivers nothing and keeps each message.
          This page shows the messages to your own address ({user.email}). In production, or with SMTP_URL set to a real server, it does not exist.
        </p>
      </div>
      {messages.length === 0 && <p className="text-ink-soft">No messages yet.</p>}
      <ol className="flex flex-col gap-4">
        {messages.map((m) => (
          <li key={m.id} className="rounded-lg border border-ink/10 bg-white p-4">
            <article aria-label={m.subject ?? "(no subject)"}>
              <h2 className="font-semibold">{m.subject ?? "(no subject)"}</h2>
              <p className="text-sm text-ink-soft">To {m.rcptTo.join(", ")} · from {m.mailFrom ?? "?"} · {m.receivedAt.toISOString().slice(0, 19).replace("T", " ")} UTC</p>
              <pre className="mt-2 whitespace-pre-wrap break-words font-sans text-sm">
                {(m.textBody ?? "").split(LINK).map((part, i) => (i % 2 ? <a key={i} href={part}>{part}</a> : part))}
              </pre>
            </article>
          </li>
        ))}
      </ol>
    </main>
  );
}
