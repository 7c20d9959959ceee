import type { Knex } from "knex";

/** The demo lab (Soil Sentinel) and its first demo modeler, or null when the demo seed has not run. */
export async function findDemoModeler(knex: Knex): Promise<{ labId: string; modelerId: string } | null> {
  const lab = await knex("labs").where({ is_demo: true, name: "Soil Sentinel" }).first("id");
  if (!lab) return null;
  const modeler = await knex("memberships as m").join("users as u", "u.id", "m.user_id")
    .where({ "m.lab_id": lab.id, "m.role": "modeler", "u.is_demo": true }).orderBy("u.id").first("u.id");
  return modeler ? { labId: String(lab.id), modelerId: String(modeler.id) } : null;
}
