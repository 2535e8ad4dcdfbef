/** Creates the demo accounts (verified, with their roles). Safe to run again: existing e-mails are skipped. */
import type { QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';
import { auth } from '../../src/lib/server/auth';
import { DEMO_ACCOUNTS } from './demo-accounts';

type Seed = (params: MigrationParams<QueryInterface>) => Promise<void>;

export const up: Seed = async () => {
  const ctx = await auth().$context;
  for (const account of DEMO_ACCOUNTS) {
    if (await ctx.internalAdapter.findUserByEmail(account.email)) continue;
    const user = await ctx.internalAdapter.createUser({ email: account.email, name: account.name, emailVerified: true, role: account.role }, { method: 'admin' });
    await ctx.internalAdapter.linkAccount({
      userId: user.id,
      providerId: 'credential',
      accountId: user.id,
      password: await ctx.password.hash(account.password),
    });
  }
};

export const down: Seed = async ({ context: qi }) => {
  await qi.sequelize.query(`DELETE FROM users WHERE email IN (${DEMO_ACCOUNTS.map(() => '?').join(', ')})`, {
    replacements: DEMO_ACCOUNTS.map((a) => a.email),
  });
};
