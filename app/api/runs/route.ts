import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { listRuns } from "@/lib/data/runs";
import { handle, readJson } from "@/lib/http";
import { createRun, runToJson } from "@/lib/runs";
import { RunLaunch } from "@/lib/schemas/run-options";
import { RunListQuery } from "@/lib/schemas/runs";

export const POST = handle("POST /api/runs", async (req) => {
  const user = await requireUser(req);
  const body = RunLaunch.parse(await readJson(req, 256 * 1024));
  const run = await createRun(user.id, body, user);
  return Response.json(run, { status: 202 });
});

export const GET = handle("GET /api/runs", async (req) => {
  const user = await requireUser(req);
  const q = RunListQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  await requireLabRole(user.id, q.lab_id, "lab:read");
  const { runs, total } = await listRuns(q.lab_id, { status: q.status, versionId: q.version_id, circuitId: q.circuit_id, limit: q.limit, offset: q.offset });
  return Response.json({ runs: runs.map(runToJson), total, limit: q.limit, offset: q.offset });
});
