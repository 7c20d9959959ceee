import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { createComparison } from "@/lib/comparisons";
import { listComparisons } from "@/lib/data/comparisons";
import { handle, readJson } from "@/lib/http";
import { ComparisonCreate, ComparisonListQuery } from "@/lib/schemas/comparisons";

/** Creates a comparison (designs or a sweep) as a draft; with `launch: true` its ensembles start at once. */
export const POST = handle("POST /api/comparisons", async (req) => {
  const user = await requireUser(req);
  const body = ComparisonCreate.parse(await readJson(req, 256 * 1024));
  const created = await createComparison(user.id, body, user);
  return Response.json(created, { status: 201 });
});

export const GET = handle("GET /api/comparisons", async (req) => {
  const user = await requireUser(req);
  const q = ComparisonListQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  await requireLabRole(user.id, q.lab_id, "lab:read");
  const { comparisons, total } = await listComparisons(q.lab_id, q);
  return Response.json({
    comparisons: comparisons.map((c) => ({
      id: c.id, name: c.name, kind: c.kind, status: c.status, error: c.error, designs: c.designs, runs_done: c.runsDone,
      progress: c.status === "succeeded" ? 1 : c.chunksTotal > 0 ? c.chunksDone / c.chunksTotal : 0,
      settings: c.settings, common_seed: c.commonSeed, created_by: c.createdByEmail, created_at: c.createdAt, finished_at: c.finishedAt,
    })),
    total, limit: q.limit, offset: q.offset,
  });
});
