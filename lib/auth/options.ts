import "server-only";
import type { AuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import EmailProvider from "next-auth/providers/email";
import { magicLinkMail } from "@/lib/mail/templates";
import { sendMail } from "@/lib/mail/send";
import { afterResponse } from "@/lib/api/after-response";
import { mailFrom } from "@/lib/mail/transport";
import { authenticateWithPassword, findUserById, LOGIN_ERROR_MESSAGE } from "./accounts";
import { kickdriftAdapter } from "./adapter";
import { endSession, openSession } from "./user-sessions";
import { runSignInHooks } from "./sign-in-hooks";
import { getAuthSecret } from "./config";
import { clientAddress } from "./limiter";
import { safeCallbackUrl } from "@/lib/ui/callback-url";
import "./session-types";

export const SESSION_MAX_AGE_S = 30 * 24 * 3600;
export const MAGIC_LINK_MAX_AGE_S = 60 * 60;

export const authOptions: AuthOptions = {
  // A getter, so the secret (possibly generated into the data folder) is read at first use, not at import.
  get secret() {
    return getAuthSecret();
  },
  session: { strategy: "jwt", maxAge: SESSION_MAX_AGE_S },
  adapter: kickdriftAdapter(),
  pages: { signIn: "/signin", error: "/signin", verifyRequest: "/signin?sent=1" },
  providers: [
    CredentialsProvider({
      id: "credentials",
      name: "E-mail and password",
      credentials: { email: { label: "E-mail", type: "email" }, password: { label: "Password", type: "password" } },
      async authorize(credentials, req) {
        let user;
        try {
          const address = clientAddress(req.headers ?? {}).replaceAll("\u0000", "");
          user = await authenticateWithPassword(credentials?.email, credentials?.password, address);
        } catch (error) {
          // next-auth would put error.message into the redirect URL: never let an internal error reach the client.
          console.error("[auth] credentials sign-in failed unexpectedly", error);
          user = null;
        }
        // Throwing (rather than returning null) makes next-auth pass our one generic message to the client.
        if (!user) throw new Error(LOGIN_ERROR_MESSAGE);
        return { id: user.id, email: user.email, name: user.name };
      },
    }),
    EmailProvider({
      from: mailFrom(),
      maxAge: MAGIC_LINK_MAX_AGE_S,
      // The transport is ours (SMTP_URL or the local fake); next-auth only builds the link.
      server: {},
      async sendVerificationRequest({ identifier, url }) {
        // After the answer, so a request for an address with an account takes as long as one without.
        afterResponse("sign-in link mail", () => sendMail(identifier, magicLinkMail({ url, host: new URL(url).host })));
      },
    }),
  ],
  events: {
    // Sign-out ends the session on the server too, so a copied cookie stops working at once.
    async signOut({ token }) {
      if (typeof token?.sid === "string") await endSession(token.sid);
    },
  },
  callbacks: {
    // Every redirect next-auth makes (after sign-in, sign-out, a magic link) goes through the same check as our pages.
    async redirect({ url, baseUrl }) {
      return `${baseUrl}${safeCallbackUrl(url, "/studios")}`;
    },
    async jwt({ token, user }) {
      if (user) {
        token.sub = user.id;
        token.id = user.id;
        // Each sign-in opens a server-side session; the cookie is only as good as its row.
        token.sid = await openSession(user.id);
        // Before the answer, so what a hook starts (the demo's watch sweep) is there on the first page.
        await runSignInHooks(user.id);
        const row = await findUserById(user.id);
        token.isAdmin = row?.isAdmin ?? false;
        token.name = row?.name ?? user.name;
        token.email = row?.email ?? user.email;
      }
      return token;
    },
    async session({ session, token }) {
      session.user = {
        id: String(token.id ?? token.sub ?? ""),
        email: String(token.email ?? ""),
        name: String(token.name ?? ""),
        isAdmin: token.isAdmin === true,
      };
      return session;
    },
  },
};
