import { pingDatabase } from "@/lib/data/pool";
import { handle } from "@/lib/http";

export const dynamic = "force-dynamic";

/** Liveness for scripts and the test runner: the app answers and reaches its database. */
export const GET = handle("GET /api/health", async () => {
  await pingDatabase();
  return Response.json({ ok: true });
});
