import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { listNotificationSettings, setNotificationSetting } from "@/lib/data/notifications";
import { handle, readJson } from "@/lib/http";
import { NotificationSettingsUpdate } from "@/lib/schemas/invitations";

const toJson = (s: { labId: string; labName: string; role: string; runs: string }) => ({ lab_id: s.labId, lab_name: s.labName, role: s.role, runs: s.runs });

/** The caller's run e-mail choice in each of their labs: off, mine (my runs) or lab (every run). */
export const GET = handle("GET /api/me/notifications", async (req) => {
  const user = await requireUser(req);
  return Response.json({ settings: (await listNotificationSettings(user.id)).map(toJson) });
});

/** Sets the caller's own choice for one lab (any member, for themselves only). */
export const PUT = handle("PUT /api/me/notifications", async (req) => {
  const user = await requireUser(req);
  const { lab_id, runs } = NotificationSettingsUpdate.parse(await readJson(req, 4 * 1024));
  await requireLabRole(user.id, lab_id, "lab:read");
  await setNotificationSetting(user.id, lab_id, runs);
  return Response.json({ lab_id, runs });
});
