import { env } from "@/lib/env";

/**
 * Whether session cookies are Secure: whenever the app's public address (NEXTAUTH_URL) is HTTPS.
 * A browser then sends them over HTTPS only, and next-auth names them with the `__Secure-` (the
 * CSRF cookie `__Host-`) prefix, which a browser refuses to set from plain HTTP or another host.
 */
export const USE_SECURE_COOKIES = (env.NEXTAUTH_URL ?? "").startsWith("https://");

/**
 * The session cookie's name. next-auth derives it from USE_SECURE_COOKIES when it writes the
 * cookie; the proxy and the password change read it by this name, so all three always agree
 * (next-auth's getToken would otherwise guess from NEXTAUTH_URL on its own).
 */
export const SESSION_COOKIE = `${USE_SECURE_COOKIES ? "__Secure-" : ""}next-auth.session-token`;

/** Seconds a session lasts after sign-in (next-auth's session.maxAge). */
export const SESSION_MAX_AGE_S = 7 * 24 * 3600;
