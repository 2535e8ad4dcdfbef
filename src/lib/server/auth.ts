/**
 * Accounts: better-auth with e-mail and password, e-mail verification, password reset, database
 * rate limiting and the admin plugin for roles and disabling accounts. Data lives in the shop's
 * SQLite database through our Sequelize adapter.
 */
import { betterAuth } from 'better-auth';
import { admin } from 'better-auth/plugins';
import { createAccessControl } from 'better-auth/plugins/access';
import { adminAc, defaultStatements } from 'better-auth/plugins/admin/access';
import { config } from './config';
import { db } from './db';
import { sequelizeAdapter } from './auth-adapter';
import { sendMail } from './mail';
import { resetPassword, verifyEmail } from './mail-templates';
import { ShopSettings } from './models';
import { isRole } from '../roles';
import type { SessionInfo, SessionUser } from './auth-types';

/** OWASP ASVS 6.2.1 / 6.2.9: at least 8 characters, and 64 or more must be accepted. */
export const PASSWORD_MIN = 8;
export const PASSWORD_MAX = 128;
export const RESET_LINK_MINUTES = 60;
/** Sign-in attempts allowed per client address per minute. */
export const SIGN_IN_LIMIT = { window: 60, max: 5 };
/** The header our own route sets to the socket's address (any client value is replaced). */
export const CLIENT_IP_HEADER = 'x-stillmark-client-ip';

const ac = createAccessControl({ ...defaultStatements, catalogue: ['edit', 'publish'], orders: ['fulfil', 'refund'] });
export const accessRoles = {
  buyer: ac.newRole({}),
  photographer: ac.newRole({ catalogue: ['edit', 'publish'] }),
  admin: ac.newRole({ ...adminAc.statements, catalogue: ['edit', 'publish'], orders: ['fulfil', 'refund'] }),
};

async function shopName(): Promise<string> {
  return (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
}

/** Localhost is reachable under two names; both count as the shop's own origin. */
function trustedOrigins(origin: string): string[] {
  const url = new URL(origin);
  if (url.hostname !== 'localhost' && url.hostname !== '127.0.0.1') return [origin];
  return ['localhost', '127.0.0.1'].map((host) => `${url.protocol}//${host}${url.port ? `:${url.port}` : ''}`);
}

function createAuth() {
  const cfg = config();
  return betterAuth({
    appName: 'Stillmark',
    baseURL: cfg.publicOrigin,
    basePath: '/api/auth',
    secret: cfg.authSecret,
    trustedOrigins: trustedOrigins(cfg.publicOrigin),
    database: sequelizeAdapter(db()),
    user: { modelName: 'users' },
    session: { modelName: 'sessions', expiresIn: 60 * 60 * 24 * 14, updateAge: 60 * 60 * 24 },
    account: { modelName: 'accounts' },
    verification: { modelName: 'verifications' },
    emailAndPassword: {
      enabled: true,
      requireEmailVerification: true,
      minPasswordLength: PASSWORD_MIN,
      maxPasswordLength: PASSWORD_MAX,
      resetPasswordTokenExpiresIn: RESET_LINK_MINUTES * 60,
      revokeSessionsOnPasswordReset: true,
      sendResetPassword: async ({ user, url }) => {
        await sendMail({ to: user.email, ...resetPassword({ shopName: await shopName(), name: user.name, url, expiresMinutes: RESET_LINK_MINUTES }) });
      },
    },
    emailVerification: {
      sendOnSignUp: true,
      autoSignInAfterVerification: true,
      expiresIn: 60 * 60 * 24,
      sendVerificationEmail: async ({ user, url }) => {
        await sendMail({ to: user.email, ...verifyEmail({ shopName: await shopName(), name: user.name, url }) });
      },
    },
    rateLimit: {
      enabled: true,
      storage: 'database',
      modelName: 'rate_limits',
      window: 60,
      max: 100,
      customRules: { '/sign-in/email': SIGN_IN_LIMIT, '/forget-password': { window: 300, max: 5 }, '/request-password-reset': { window: 300, max: 5 } },
    },
    advanced: {
      cookiePrefix: 'stillmark',
      useSecureCookies: cfg.publicOrigin.startsWith('https:'),
      defaultCookieAttributes: { httpOnly: true, sameSite: 'lax' },
      ipAddress: { ipAddressHeaders: [CLIENT_IP_HEADER] },
      // better-auth turns its origin and CSRF checks off when it thinks it runs under a test runner;
      // we want them on everywhere, tests included, so the tests check what production does.
      disableOriginCheck: false,
      disableCSRFCheck: false,
    },
    plugins: [admin({ ac, roles: accessRoles, defaultRole: 'buyer', adminRoles: ['admin'] })],
  });
}

export type Auth = ReturnType<typeof createAuth>;
let instance: Auth | undefined;

export function auth(): Auth {
  instance ??= createAuth();
  return instance;
}

/** Tests build a fresh instance after pointing the app at a new database. */
export function resetAuthForTests(): void {
  instance = undefined;
}

/**
 * Reads the session behind a request's cookies; a disabled or unknown account reads as signed out.
 * `setCookies` carries a refreshed session cookie when better-auth extended the session.
 */
export async function readSession(headers: Headers): Promise<{ user: SessionUser; session: SessionInfo; setCookies: string[] } | null> {
  const { headers: answer, response: found } = await auth().api.getSession({ headers, returnHeaders: true });
  if (!found) return null;
  const setCookies = answer.getSetCookie();
  const u = found.user as typeof found.user & { role?: string | null; banned?: boolean | null };
  if (u.banned) return null;
  return {
    user: { id: u.id, email: u.email, name: u.name, role: isRole(u.role) ? u.role : 'buyer', emailVerified: u.emailVerified },
    session: { id: found.session.id, expiresAt: found.session.expiresAt },
    setCookies,
  };
}
