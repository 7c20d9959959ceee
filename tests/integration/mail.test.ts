import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { isFinished, stopWorker, waitForRun, workerPool } from "../support/worker";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let launcher: Awaited<ReturnType<typeof newUser>>; // opted in: my runs
let watcher: Awaited<ReturnType<typeof newUser>>; // opted in: every run in the lab
let quiet: Awaited<ReturnType<typeof newUser>>; // never opted in
let bystander: Awaited<ReturnType<typeof newUser>>; // my runs, but launches none
let versionId: string;
const workers = workerPool();
const worker = workers.start;

async function optIn(client: Client, runs: "off" | "mine" | "lab") {
  const r = await client.request("PUT", "/api/me/notifications", { lab_id: owner.labId, runs });
  expect(r.status, r.text).toBe(200);
}

async function launch(body: Record<string, unknown> = {}) {
  const r = await launcher.client.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 100, dt: 1, runs: 50, seed: 11, ...body });
  expect(r.status, r.text).toBe(202);
  return r.json.id as string;
}

const waitFinished = (runId: string, timeoutMs = 120_000) => waitForRun(launcher.client, runId, isFinished, timeoutMs);

/** E-mails the fake received for `to` about run `runId`. */
const mailsAbout = (to: string, runId: string) =>
  db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [to]).andWhere("text_body", "like", `%/runs/${runId}\n%`).select("subject", "text_body");

async function waitForMail(to: string, runId: string, timeoutMs = 15_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const rows = await mailsAbout(to, runId);
    if (rows.length) return rows;
    await new Promise((r) => setTimeout(r, 100));
  }
  return mailsAbout(to, runId);
}

beforeAll(async () => {
  db = testDb();
  owner = await newUser("mailowner");
  [launcher, watcher, quiet, bystander] = await Promise.all([newUser("launcher"), newUser("watcher"), newUser("quiet"), newUser("bystander")]);
  for (const [u, role] of [[launcher, "modeler"], [watcher, "reviewer"], [quiet, "modeler"], [bystander, "modeler"]] as const) {
    expect((await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: u.email, role })).status).toBe(201);
  }
  await optIn(launcher.client, "mine");
  await optIn(watcher.client, "lab");
  await optIn(bystander.client, "mine");
  const c = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: { ...ringTimer, name: "Ring timer for e-mails" } });
  expect(c.status, c.text).toBe(201);
  versionId = c.json.version_id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db.destroy();
});

describe("run-finished e-mails through the mail fake", () => {
  it("settings are each member's own, per lab, and start off", async () => {
    const mine = await quiet.client.request("GET", "/api/me/notifications");
    expect(mine.json.settings).toContainEqual({ lab_id: owner.labId, lab_name: "mailowner's lab", role: "modeler", runs: "off" });
    expect((await launcher.client.request("GET", "/api/me/notifications")).json.settings).toContainEqual(expect.objectContaining({ lab_id: owner.labId, runs: "mine" }));
    const bad = await quiet.client.request("PUT", "/api/me/notifications", { lab_id: owner.labId, runs: "always" });
    expect(bad.status).toBe(422);
    expect(bad.json.error).toMatch(/^runs: /);
  });

  it("a finished run sends one e-mail with its link to the launcher (my runs) and to the watcher (every run), none to others", async () => {
    await worker();
    const id = await launch();
    const run = await waitFinished(id);
    expect(run.status).toBe("succeeded");
    const [mine] = await waitForMail(launcher.email, id);
    expect(mine!.subject).toBe(`Burstwise: run #${id} (Ring timer for e-mails v1, ssa) finished`);
    expect(mine!.text_body).toContain(`${process.env.BURSTWISE_TEST_URL}/labs/${owner.labId}/runs/${id}\n`);
    await waitForMail(watcher.email, id);
    await new Promise((r) => setTimeout(r, 1500)); // room for a duplicate to show up
    expect(await mailsAbout(launcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(quiet.email, id)).toHaveLength(0);
    expect(await mailsAbout(bystander.email, id)).toHaveLength(0);
    expect(await mailsAbout(owner.email, id)).toHaveLength(0);
    const rows = await db("notifications").where({ subject_kind: "run", subject_id: id }).select("email", "status");
    expect(rows.map((r) => `${r.email}:${r.status}`).sort()).toEqual([`${launcher.email}:sent`, `${watcher.email}:sent`].sort());
  });

  it("a worker killed with SIGKILL mid-run and a retry in another worker still send exactly one e-mail each", async () => {
    const first = await worker({ WORKER_CONCURRENCY: "1" });
    const id = await launch({ runs: 400, t_end: 1000, seed: 99 });
    const until = Date.now() + 60_000;
    while (Date.now() < until) {
      const r = (await launcher.client.request("GET", `/api/runs/${id}`)).json;
      if (r.chunks_done >= 1 && r.status === "running") break;
      await new Promise((res) => setTimeout(res, 100));
    }
    await stopWorker(first, "SIGKILL");
    await worker({ NOTIFY_SWEEP_S: "1" });
    expect((await waitFinished(id)).status).toBe("succeeded");
    await waitForMail(launcher.email, id);
    await new Promise((r) => setTimeout(r, 3000)); // several sweeps
    expect(await mailsAbout(launcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(1);
    expect(await db("audit_events").where({ action: "run.finished", target_id: id }).count("* as n").first()).toEqual({ n: "1" });
  });

  it("a run whose worker died between storing the result and e-mailing is caught up by the sweep, once", async () => {
    const id = await launch();
    // As if a worker stored the result and was killed before its hook ran: no e-mail, no audit event yet.
    await db("runs").where({ id }).update({ status: "succeeded", started_at: db.raw("now() - interval '30 seconds'"), finished_at: db.raw("now() - interval '20 seconds'") });
    expect(await mailsAbout(launcher.email, id)).toHaveLength(0);
    await worker({ NOTIFY_SWEEP_S: "1" });
    expect(await waitForMail(launcher.email, id)).toHaveLength(1);
    // The hook running again later (a retried finalize job) finds every claim taken.
    await db("notified_subjects").where({ subject_kind: "run", subject_id: id }).delete();
    await new Promise((r) => setTimeout(r, 3000));
    expect(await mailsAbout(launcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(1);
    expect(await db("audit_events").where({ action: "run.finished", target_id: id }).count("* as n").first()).toEqual({ n: "1" });
  });

  it("an e-mail claimed by a worker that died before sending is sent once its claim is stale; a live claim is left to its sender; a non-recipient's is given up", async () => {
    const id = await launch({ seed: 21 });
    // As if a worker finished the run, claimed both e-mails and was killed before sending them:
    // the launcher's claim 30 s ago (stale at 8 s), the watcher's just now (live).
    await db("runs").where({ id }).update({ status: "succeeded", started_at: db.raw("now() - interval '40 seconds'"), finished_at: db.raw("now() - interval '30 seconds'") });
    const claim = (u: { email: string; userId: string }, ago: string) =>
      db("notifications").insert({ subject_kind: "run", subject_id: id, lab_id: owner.labId, user_id: u.userId, email: u.email, claimed_at: db.raw(`now() - interval '${ago}'`) });
    await claim(launcher, "30 seconds");
    await claim(watcher, "0 seconds");
    await claim(quiet, "30 seconds"); // claimed for someone who is not (or no longer) a recipient
    await worker({ NOTIFY_SWEEP_S: "1", NOTIFY_STALE_CLAIM_S: "8" });
    expect(await waitForMail(launcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(0); // its claim is still live
    expect(await db("notified_subjects").where({ subject_kind: "run", subject_id: id }).first()).toBeUndefined();
    expect(await waitForMail(watcher.email, id)).toHaveLength(1); // stale after 8 s: sent by the sweep
    await new Promise((r) => setTimeout(r, 2500));
    expect(await mailsAbout(launcher.email, id)).toHaveLength(1);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(1);
    const rows = await db("notifications").where({ subject_kind: "run", subject_id: id }).whereIn("user_id", [launcher.userId, watcher.userId]).select("status", "message_id");
    expect(rows.map((r) => r.status)).toEqual(["sent", "sent"]);
    // The non-recipient's stale claim is given up (no e-mail), so the run can count as notified.
    expect(await mailsAbout(quiet.email, id)).toHaveLength(0);
    expect((await db("notifications").where({ subject_kind: "run", subject_id: id, user_id: quiet.userId }).first("status")).status).toBe("failed");
    // A fixed Message-ID per recipient and run, so that a second copy would read as the same message.
    for (const u of [launcher, watcher]) expect(rows.some((r) => new RegExp(`^<run-${id}\\.user-${u.userId}@.+\\.burstwise>$`).test(r.message_id))).toBe(true);
    expect(await db("notified_subjects").where({ subject_kind: "run", subject_id: id }).first()).toBeTruthy();
  });

  it("after opting out, a finished run sends nothing", async () => {
    await optIn(launcher.client, "off");
    await optIn(watcher.client, "off");
    await worker();
    const id = await launch({ seed: 12 });
    expect((await waitFinished(id)).status).toBe("succeeded");
    await new Promise((r) => setTimeout(r, 1500));
    expect(await mailsAbout(launcher.email, id)).toHaveLength(0);
    expect(await mailsAbout(watcher.email, id)).toHaveLength(0);
    expect(await db("notified_subjects").where({ subject_kind: "run", subject_id: id }).first()).toBeTruthy();
  });
});
