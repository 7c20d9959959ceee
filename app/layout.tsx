import type { Metadata } from "next";
import localFont from "next/font/local";
import { connection } from "next/server";

import { ZodJitless } from "./_components/zod-jitless";
import "./globals.css";

// Shipped with the app (no font download at build time).
const sans = localFont({
  src: "../node_modules/@fontsource-variable/inter/files/inter-latin-wght-normal.woff2",
  variable: "--font-sans",
  weight: "100 900",
  display: "swap",
});

export const metadata: Metadata = {
  title: { default: "Burstwise", template: "%s · Burstwise" },
  description: "Predict how noisy a gene circuit will be in single cells, before you clone it.",
};

export default async function RootLayout({ children }: { children: React.ReactNode }) {
  // Every page is rendered per request: its scripts carry that request's CSP nonce (proxy.ts),
  // which a page prerendered at build time could not.
  await connection();
  return (
    <html lang="en" className={sans.variable}>
      <body className="min-h-screen font-sans">
        <ZodJitless />
        {children}
      </body>
    </html>
  );
}
