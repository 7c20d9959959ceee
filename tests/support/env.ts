/** Where `npm test` put the app and the throwaway database (scripts/test.mjs). */
export function testEnv() {
  const baseUrl = process.env.BURSTWISE_TEST_URL;
  const databaseUrl = process.env.TEST_DATABASE_URL;
  if (!baseUrl || !databaseUrl) throw new Error("run through `npm test` (BURSTWISE_TEST_URL and TEST_DATABASE_URL are unset)");
  return { baseUrl, databaseUrl, chromiumPath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium" };
}
