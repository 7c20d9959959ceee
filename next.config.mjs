/** @type {import('next').NextConfig} */
const nextConfig = {
  // knex, pg and pg-boss load optional drivers dynamically and cannot be bundled.
  serverExternalPackages: ["knex", "pg", "pg-boss", "piscina", "bcryptjs"],
  poweredByHeader: false,
  // A separate build folder lets several checkouts' test runs build and serve side by side.
  distDir: process.env.BURSTWISE_DIST_DIR ?? ".next",
};
export default nextConfig;
