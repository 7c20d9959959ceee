// `npm run worker`: one more worker process against DATABASE_URL, or the local cluster of `npm start`.
import { spawn } from "node:child_process";
import { ensureNodeModules, ensureLocalCluster, localUrl, localSecret, ROOT, log } from "./lib/bootstrap.mjs";

ensureNodeModules();
let databaseUrl = process.env.DATABASE_URL;
if (!databaseUrl) {
  ensureLocalCluster();
  databaseUrl = localUrl("burstwise");
  log(`using the local cluster's database ${databaseUrl}`);
}
const child = spawn(process.execPath, ["--import", "tsx", "worker/index.ts"], {
  cwd: ROOT, stdio: "inherit",
  env: { ...process.env, DATABASE_URL: databaseUrl, NEXTAUTH_SECRET: process.env.NEXTAUTH_SECRET ?? localSecret() },
});
for (const sig of ["SIGINT", "SIGTERM"]) process.on(sig, () => child.kill("SIGTERM"));
child.on("exit", (code) => process.exit(code ?? 1));
