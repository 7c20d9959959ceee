import NextAuth from "next-auth";

import { toThrottledResponse } from "@/lib/auth/limits";
import { authOptions } from "@/lib/auth/options";

type Ctx = { params: Promise<{ nextauth: string[] }> };

const handler = NextAuth(authOptions);

export { handler as GET };

/**
 * next-auth's POST; a sign-in refused by the attempt limits becomes a 429 with Retry-After.
 * Its own forms and client post application/x-www-form-urlencoded; any other body (next-auth
 * would parse a JSON one and answer junk with a 500) is a 415 naming the content type.
 */
export async function POST(req: Request, ctx: Ctx): Promise<Response> {
  const type = req.headers.get("content-type") ?? "";
  if (!/^application\/x-www-form-urlencoded\s*(;|$)/i.test(type)) {
    const got = type ? `"${type.split(";")[0]!.trim().slice(0, 60)}"` : "no content type";
    return Response.json({ error: `content-type: send the form as application/x-www-form-urlencoded (got ${got})` }, { status: 415 });
  }
  const res: Response = await handler(req, ctx);
  return (await toThrottledResponse(res)) ?? res;
}
