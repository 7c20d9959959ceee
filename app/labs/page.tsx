import { redirect } from "next/navigation";

import { requirePageUser } from "@/lib/auth/page";

export const dynamic = "force-dynamic";

/** Sends the user to their first lab. */
export default async function LabsIndex() {
  const user = await requirePageUser("/labs");
  const first = user.labs[0];
  if (!first) redirect("/account");
  redirect(`/labs/${first.id}`);
}
