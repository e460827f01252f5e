import type { GroupRole } from '../shared/access';

declare global {
  namespace Express {
    interface Request {
      /** Set by `requireUser` / `optionalUser` (server/access.ts). */
      user?: { id: string; name: string; email: string };
      /** The caller's role in `req.params.groupId`, set by `requireGroup`. */
      groupRole?: GroupRole;
      /** How the caller proved who they are: a session cookie or a personal API token. */
      authVia?: 'session' | 'token';
    }
  }
}
export {};
