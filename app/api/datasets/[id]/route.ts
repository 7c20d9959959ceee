import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { deleteDataset, getDataset } from "@/lib/data/datasets";
import { handle, idParam, notFound } from "@/lib/http";

type Ctx = { params: Promise<{ id: string }> };

/** A dataset's description, units and measured statistics; its parsed values with ?values=1. */
export const GET = handle("GET /api/datasets/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const withValues = new URL(req.url).searchParams.get("values") === "1";
  const ds = await getDataset(idParam((await ctx.params).id, "dataset"), { values: withValues });
  if (!ds) throw notFound("dataset");
  await requireLabRole(user.id, ds.lab_id, "lab:read", "dataset");
  return Response.json(ds);
});

export const DELETE = handle("DELETE /api/datasets/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const ds = await getDataset(idParam((await ctx.params).id, "dataset"));
  if (!ds) throw notFound("dataset");
  await requireLabRole(user.id, ds.lab_id, "delete", "dataset");
  await deleteDataset(ds.id, { id: user.id, email: user.email });
  return new Response(null, { status: 204 });
});
