import type { Metadata } from "next";
import { getServerSession } from "next-auth";
import Link from "next/link";

import { Logo } from "@/app/_components/logo";
import { authOptions } from "@/lib/auth/options";
import { getInvitationByToken } from "@/lib/data/invitations";
import { InvitationToken } from "@/lib/schemas/invitations";

import { AcceptInvitation } from "./accept-invitation";

export const metadata: Metadata = { title: "Invitation" };
export const dynamic = "force-dynamic";

const when = (d: Date) => new Date(d).toISOString().slice(0, 16).replace("T", " ") + " UTC";

/** Where an invitation link lands: who invites, to which lab and role, and how to accept. */
export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const valid = InvitationToken.safeParse(token);
  const [inv, session] = await Promise.all([valid.success ? getInvitationByToken(valid.data) : null, getServerSession(authOptions)]);
  const signedInAs = session?.user?.email ?? null;
  let body: React.ReactNode;
  if (!inv) {
    body = <Refused title="This invitation link is not valid">Check that you opened the whole link from the e-mail, or ask the lab&apos;s owner for a new invitation.</Refused>;
  } else if (inv.state === "accepted") {
    body = <Refused title="This invitation has already been used">Each invitation link works once. {signedInAs ? <Link href={`/labs/${inv.labId}`}>Go to {inv.labName}</Link> : <>If it was you, <Link href="/signin">sign in</Link>.</>} Otherwise ask the lab&apos;s owner for a new one.</Refused>;
  } else if (inv.state === "revoked") {
    body = <Refused title="This invitation was withdrawn">The lab&apos;s owner withdrew it. Ask them for a new one if you should join {inv.labName}.</Refused>;
  } else if (inv.state === "expired") {
    body = <Refused title="This invitation has expired">It expired on {when(inv.expiresAt)}. Ask the lab&apos;s owner for a new one.</Refused>;
  } else {
    body = (
      <>
        <h1 className="text-2xl font-semibold">Join {inv.labName}</h1>
        <p className="text-ink-soft">
          {inv.invitedBy ?? "The lab's owner"} invites <strong className="text-ink">{inv.email}</strong> to the lab <strong className="text-ink">{inv.labName}</strong> as{" "}
          <strong className="text-ink">{inv.role}</strong>. The link works once, until {when(inv.expiresAt)}.
        </p>
        <AcceptInvitation
          token={valid.success ? valid.data : ""} labId={inv.labId} email={inv.email} hasAccount={inv.hasAccount}
          signedInAs={signedInAs}
        />
      </>
    );
  }
  return (
    <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center gap-6 px-6 py-12">
      <Link href="/" className="text-ink no-underline"><Logo className="text-xl" /></Link>
      {body}
    </main>
  );
}

function Refused({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <>
      <h1 className="text-2xl font-semibold">{title}</h1>
      <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{children}</p>
    </>
  );
}
