/// <reference types="astro/client" />

declare namespace App {
  interface Locals {
    requestId: string;
    /** Who is calling: a signed-in user, a script's API token, or a gateway. */
    principal: import("@/lib/server/auth").Principal | null;
    /** The signed-in user (pages), or null. */
    user: import("@/lib/server/auth").SessionUser | null;
    sessionId: string | null;
  }
}
