import type { Role, Specialty } from '@emberline/shared';

/** The signed-in user as every handler sees it; built from the session on each request. */
export interface SignedInUser {
  id: string;
  email: string;
  displayName: string;
  roles: Role[];
  /** boardId → specialty */
  memberships: Map<string, Specialty>;
  boardNames: Map<string, string>;
  signInMethod: 'local' | 'saml';
  hasTotp: boolean;
  mustEnrolTotp: boolean;
}

declare module 'express-session' {
  interface SessionData {
    userId: string;
    signInMethod: 'local' | 'saml';
    signedInAt: number;
    /** Secret being enrolled, until the first code confirms it. */
    pendingTotpSecret: string;
  }
}

declare module 'express-serve-static-core' {
  interface Request {
    currentUser?: SignedInUser;
  }
}

/** Where a request came from, for the audit trail. */
export interface Actor {
  id: string | null;
  email: string | null;
  ip: string | null;
}
