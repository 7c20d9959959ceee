import { createUserWithLab } from "@/lib/data/users";
import { handle, readJson } from "@/lib/http";
import { SignUpInput } from "@/lib/schemas/auth";

export const POST = handle("POST /api/signup", async (req) => {
  const input = SignUpInput.parse(await readJson(req, 16 * 1024));
  const { userId, labId } = await createUserWithLab(input);
  return Response.json({ user_id: userId, lab_id: labId }, { status: 201 });
});
