import { requireUser } from "@/lib/auth/session";
import { listLabsForUser } from "@/lib/data/users";
import { handle } from "@/lib/http";

export const GET = handle("GET /api/labs", async (req) => {
  const user = await requireUser(req);
  const labs = await listLabsForUser(user.id);
  return Response.json({ labs: labs.map((l) => ({ id: l.id, name: l.name, role: l.role })) });
});
