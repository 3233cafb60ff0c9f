import NextAuth from "next-auth";
import { authOptions } from "@/lib/auth/options";

// Public by nature (route-access.ts: "GET/POST /api/auth/[...nextauth]"): sign-in itself.
// eslint-disable-next-line @typescript-eslint/no-unsafe-assignment -- next-auth 4 types NextAuth()'s answer as any
const handler = NextAuth(authOptions);

export { handler as GET, handler as POST };
