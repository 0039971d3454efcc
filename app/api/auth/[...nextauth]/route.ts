import { handleNextAuth } from "@/lib/auth/next-auth-route";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

type Context = { params: Promise<{ nextauth: string[] }> };

async function handler(req: Request, context: Context): Promise<Response> {
  const { nextauth } = await context.params;
  return handleNextAuth(req, nextauth ?? []);
}

export { handler as GET, handler as POST };
