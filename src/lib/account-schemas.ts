/** Account forms, shared by the islands and the server. Password rules follow OWASP ASVS 5.0 V6.2. */
import { z } from 'zod';

export const PASSWORD_MIN_LENGTH = 8;
export const PASSWORD_MAX_LENGTH = 128;

const email = z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter a valid e-mail address.' }));
// No composition rules (ASVS 6.2.5): length is what counts.
const password = z
  .string()
  .min(PASSWORD_MIN_LENGTH, { message: `Use at least ${PASSWORD_MIN_LENGTH} characters.` })
  .max(PASSWORD_MAX_LENGTH, { message: `Use at most ${PASSWORD_MAX_LENGTH} characters.` });

export const signInInput = z.object({ email, password: z.string().min(1, { message: 'Enter your password.' }) });
export const signUpInput = z.object({ name: z.string().trim().min(1, { message: 'Enter your name.' }).max(100), email, password });
export const forgotPasswordInput = z.object({ email });
export const resetPasswordInput = z
  .object({ password, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { message: 'The two passwords differ.', path: ['confirm'] });

export type SignInInput = z.infer<typeof signInInput>;
export type SignUpInput = z.infer<typeof signUpInput>;
export type ForgotPasswordInput = z.infer<typeof forgotPasswordInput>;
export type ResetPasswordInput = z.infer<typeof resetPasswordInput>;

/** Our own words for better-auth's error codes; unknown codes fall back to the server's message. */
export const AUTH_MESSAGES: Record<string, string> = {
  INVALID_EMAIL_OR_PASSWORD: 'That e-mail and password do not match an account.',
  EMAIL_NOT_VERIFIED: 'Confirm your e-mail address first: we have sent you a new link.',
  BANNED_USER: 'This account is disabled. Write to the shop if you think that is a mistake.',
  USER_ALREADY_EXISTS: 'An account with this e-mail already exists. Sign in, or reset the password.',
  USER_ALREADY_EXISTS_USE_ANOTHER_EMAIL: 'An account with this e-mail already exists. Sign in, or reset the password.',
  INVALID_TOKEN: 'This link has expired or was already used. Ask for a new one.',
  PASSWORD_TOO_SHORT: `Use at least ${PASSWORD_MIN_LENGTH} characters.`,
  PASSWORD_TOO_LONG: `Use at most ${PASSWORD_MAX_LENGTH} characters.`,
  TOO_MANY_REQUESTS: 'Too many attempts. Wait a minute and try again.',
};
