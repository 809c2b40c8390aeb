import bcrypt from 'bcryptjs';
import request from 'supertest';
import type { Role } from '../../shared/roles';
import { createApp, type BuiltApp } from '../../server/app';
import { configFromEnv, type ServerConfig } from '../../server/config';
import { createContext, type CompositionOverrides } from '../../server/composition';
import type { AppContext } from '../../server/context';
import { UserEntity } from '../../server/db/entities';
import { createTestDb, type TestDb } from './db';

export const TEST_PASSWORD = 'correct-horse-battery';
export const emailFor = (role: Role) => `${role}@test.example`;

export interface TestApp extends BuiltApp {
  ctx: AppContext;
  db: TestDb;
  /** A supertest agent already signed in with the given role (cookie kept). */
  signIn: (role: Role) => Promise<ReturnType<typeof request.agent>>;
  close: () => Promise<void>;
}

/**
 * The real Express app on a fresh database with one user per role (password TEST_PASSWORD), built
 * by the same composition root as the API process; `wiring` overrides the clock or mail options.
 */
export async function createTestApp(overrides: Partial<ServerConfig> = {}, wiring: CompositionOverrides = {}): Promise<TestApp> {
  const db = await createTestDb();
  const config = { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config, ...overrides };
  const ctx = createContext(db.ds, config, wiring);
  const hash = await bcrypt.hash(TEST_PASSWORD, 4);
  for (const role of ['admin', 'engineer', 'operator', 'manager'] as Role[]) {
    await db.ds.getRepository(UserEntity).insert({ email: emailFor(role), name: `Test ${role}`, role, passwordHash: hash });
  }
  const built = createApp(ctx);
  const agents = new Map<Role, ReturnType<typeof request.agent>>();
  return {
    ...built,
    ctx,
    db,
    signIn: async (role) => {
      const cached = agents.get(role);
      if (cached) return cached;
      const agent = request.agent(built.app);
      const res = await agent.post('/api/auth/sign-in').send({ email: emailFor(role), password: TEST_PASSWORD });
      if (res.status !== 200) throw new Error(`sign-in as ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
      agents.set(role, agent);
      return agent;
    },
    close: async () => {
      await ctx.close();
      await db.drop();
    },
  };
}
