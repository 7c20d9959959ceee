import { z } from "zod";

/** The process environment, parsed once. No other module reads process.env. */
const EnvSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().min(1).default("postgres://postgres@127.0.0.1:55432/burstwise"),
  NEXTAUTH_SECRET: z.string().min(1).optional(),
  NEXTAUTH_URL: z.string().url().optional(),
  /** Chunks one worker process computes at once, each on its own thread (default: all cores). */
  WORKER_CONCURRENCY: z.coerce.number().int().min(1).max(64).optional(),
  SMTP_URL: z.string().optional(),
  /** Seconds without a heartbeat before a dead worker's chunk is retried (pg-boss minimum 10). */
  WORKER_HEARTBEAT_S: z.coerce.number().int().min(10).max(3600).default(10),
  /** How often pg-boss's supervisor looks for such chunks. */
  WORKER_SUPERVISE_S: z.coerce.number().int().min(1).max(3600).default(5),
});

export type Env = z.infer<typeof EnvSchema>;
export const env: Env = EnvSchema.parse(process.env);
