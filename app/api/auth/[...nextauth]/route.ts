import NextAuth from "next-auth";
import { authOptions } from "@/lib/auth/options";

// Public by nature (route-access.ts: "GET/POST /api/auth/[...nextauth]"): sign-in itself.
const handler = NextAuth(authOptions);

export { handler as GET, handler as POST };
