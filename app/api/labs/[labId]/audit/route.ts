import { requireLabRole } from "@/lib/access";
import { AuditQuery } from "@/lib/view/audit";
import { requireUser } from "@/lib/auth/session";
import { listAuditEvents } from "@/lib/data/audit";
import { handle, idParam } from "@/lib/http";

/** The lab's audit trail, newest first; ?action=&actor=&from=&to=&limit=&offset=. Owners only. */
export const GET = handle("GET /api/labs/:id/audit", async (req, ctx: { params: Promise<{ labId: string }> }) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "audit:read");
  const q = AuditQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  const { events, total } = await listAuditEvents(labId, q);
  return Response.json({ events, total, limit: q.limit, offset: q.offset });
});
