/** @type {import('next').NextConfig} */
const nextConfig = {
  // knex, pg and pg-boss load optional drivers dynamically and cannot be bundled.
  serverExternalPackages: ["knex", "pg", "pg-boss", "piscina", "bcryptjs"],
  poweredByHeader: false,
};
export default nextConfig;
