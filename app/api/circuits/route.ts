import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { circuitFromBody } from "@/lib/circuit-input";
import { createCircuit, listCircuits } from "@/lib/data/circuits";
import { handle, readJson } from "@/lib/http";
import { CircuitCreate, ListQuery } from "@/lib/schemas/api";

export const GET = handle("GET /api/circuits", async (req) => {
  const user = await requireUser(req);
  const query = ListQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  await requireLabRole(user.id, query.lab_id, "lab:read");
  const circuits = await listCircuits(query.lab_id, { q: query.q, limit: query.limit, offset: query.offset });
  return Response.json({
    circuits: circuits.map((c) => ({
      id: c.id, name: c.name, versions: c.versionCount, latest_version_id: c.latestVersionId,
      updated_at: c.updatedAt, changed_by: c.changedBy, last_run_at: c.lastRunAt,
    })),
  });
});

export const POST = handle("POST /api/circuits", async (req) => {
  const user = await requireUser(req);
  const body = CircuitCreate.parse(await readJson(req, 6 * 1024 * 1024));
  await requireLabRole(user.id, body.lab_id, "circuit:write");
  const { circuit, sourceFormat, warnings } = await circuitFromBody(body);
  const { id, versionId } = await createCircuit(body.lab_id, user.id, circuit, sourceFormat, (r) => ({
    labId: body.lab_id, actor: user, action: "circuit.created", target: { type: "circuit", id: r.id }, details: { name: circuit.name, version_id: r.versionId, source: sourceFormat },
  }), warnings);
  return Response.json({ id, version_id: versionId, ...(warnings.length ? { warnings } : {}) }, { status: 201 });
});
