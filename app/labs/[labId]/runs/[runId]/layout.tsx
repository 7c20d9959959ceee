import { loadRun } from "../_lib/load-run";

/**
 * Looks the run up before the page's loading skeleton streams: a notFound() inside the loading
 * boundary would come after a 200 status was already sent.
 */
export default async function RunLayout({ children, params }: { children: React.ReactNode; params: Promise<{ labId: string; runId: string }> }) {
  const { labId, runId } = await params;
  await loadRun(labId, runId);
  return children;
}
