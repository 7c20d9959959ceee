import NextAuth from "next-auth";

import { toThrottledResponse } from "@/lib/auth/limits";
import { authOptions } from "@/lib/auth/options";

type Ctx = { params: Promise<{ nextauth: string[] }> };

const handler = NextAuth(authOptions);

export { handler as GET };

/** next-auth's POST; a sign-in refused by the attempt limits becomes a 429 with Retry-After. */
export async function POST(req: Request, ctx: Ctx): Promise<Response> {
  const res: Response = await handler(req, ctx);
  return (await toThrottledResponse(res)) ?? res;
}
