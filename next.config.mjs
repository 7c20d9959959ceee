/** @type {import('next').NextConfig} */
const nextConfig = {
  // knex, pg and pg-boss load optional drivers dynamically and cannot be bundled.
  serverExternalPackages: ["knex", "pg", "pg-boss", "piscina", "bcryptjs"],
  poweredByHeader: false,
  // proxy.ts sees every /api request, and Next buffers the body of such a request up to this size
  // (10 MB by default, cutting the rest off); above the largest upload (10 MB + form overhead), so
  // an upload's own size check still answers 413.
  experimental: { proxyClientMaxBodySize: "12mb" },
  // A separate build folder lets several checkouts' test runs build and serve side by side.
  distDir: process.env.BURSTWISE_DIST_DIR ?? ".next",
  // On every answer (pages, API, 404s, static files); the content security policy comes from
  // proxy.ts, which makes a nonce per page. Referrer same-origin: invitation links carry their
  // token in the path, and must not leak to another site through a link.
  async headers() {
    return [{
      source: "/:path*",
      headers: [
        { key: "X-Content-Type-Options", value: "nosniff" },
        { key: "Referrer-Policy", value: "same-origin" },
        { key: "X-Frame-Options", value: "DENY" },
        { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=(), payment=()" },
      ],
    }];
  },
};
export default nextConfig;
