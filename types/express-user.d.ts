// passport's req.user is the signed-in user as deserializeUser builds it (server/modules/auth/auth.routes.ts).
import type { SessionUser } from '../shared/schemas/auth';

declare global {
  namespace Express {
    // eslint-disable-next-line @typescript-eslint/no-empty-object-type -- merging into Express.User, not a new type
    interface User extends SessionUser {}
  }
}
