import type { LabRole } from '../../../shared/api/auth.js';

/** The signed-in caller, resolved once per request by `authenticate`. */
export type AuthUser = {
  id: string;
  email: string;
  name: string;
  emailVerified: boolean;
  isAdmin: boolean;
  activeLabId: string | null;
};
export type Auth = { user: AuthUser; via: 'cookie'; sessionId: string } | { user: AuthUser; via: 'token'; tokenId: string };
export type LabAccess = { labId: string; labName: string; role: LabRole | null };

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Locals {
      requestId: string;
      auth?: Auth;
      lab?: LabAccess;
    }
  }
}
