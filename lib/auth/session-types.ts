// next-auth module augmentation: what our session and JWT carry.
import "server-only";
import "next-auth";
import "next-auth/jwt";

declare module "next-auth" {
  interface Session {
    user: { id: string; email: string; name: string; isAdmin: boolean };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    id?: string;
    /** The server-side session (user_sessions row) this cookie belongs to. */
    sid?: string;
    isAdmin?: boolean;
  }
}

export {};
