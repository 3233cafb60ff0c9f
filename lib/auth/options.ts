import "server-only";
import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { db } from "../../db";
import { env } from "../env";
import { isRole } from "./roles";
import { secureCookies } from "./session-cookie";
import { endSessions } from "./session-version";
import { checkCredentials } from "./sign-in";

export const authOptions: NextAuthOptions = {
  secret: env().NEXTAUTH_SECRET,
  useSecureCookies: secureCookies(),
  session: { strategy: "jwt", maxAge: 12 * 3600 },
  pages: { signIn: "/sign-in", error: "/sign-in" },
  providers: [
    CredentialsProvider({
      name: "E-mail and password",
      credentials: { email: { type: "email" }, password: { type: "password" } },
      async authorize(credentials, req) {
        const headers = req?.headers as Record<string, string | string[] | undefined> | undefined;
        const forwarded = headers?.["x-forwarded-for"];
        const ip = (Array.isArray(forwarded) ? forwarded[0] : forwarded)?.split(",")[0]?.trim() ?? null;
        // A thrown error's message reaches the sign-in form as `error`.
        const user = await checkCredentials(
          { email: credentials?.email, password: credentials?.password },
          ip,
        );
        return {
          id: user.id,
          email: user.email,
          name: user.name,
          role: user.role,
          sessionVersion: user.sessionVersion,
        };
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user) {
        token.uid = user.id;
        token.role = (user as { role?: string }).role;
        token.sv = (user as { sessionVersion?: number }).sessionVersion;
      }
      return token;
    },
    session({ session, token }) {
      if (session.user && typeof token.uid === "string") {
        session.user.id = token.uid;
        session.user.role = isRole(token.role) ? token.role : undefined;
        session.user.sessionVersion = token.sv;
      }
      return session;
    },
  },
  events: {
    // Signing out ends the session on the server too: the cookie's version is retired, so a
    // copy of the cookie stops working. (A cookie already retired changes nothing.)
    async signOut({ token }) {
      if (typeof token?.uid === "string" && typeof token.sv === "number")
        await endSessions(db, token.uid, token.sv);
    },
  },
};
