// API tokens: request schema and response types (no I/O, so the client imports them).
import { z } from 'zod';

export const createTokenBodySchema = z.object({
  name: z.string().trim().min(1, 'Give the token a name').max(80, 'Keep the name under 80 characters'),
});
export type CreateTokenBody = z.infer<typeof createTokenBodySchema>;

export const apiTokenSchema = z.object({
  id: z.uuid(),
  name: z.string(),
  /** The token's first characters, to tell tokens apart; the rest is never shown again. */
  prefix: z.string(),
  createdAt: z.string(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;

export const tokenListResponseSchema = z.object({ tokens: z.array(apiTokenSchema) });
export type TokenListResponse = z.infer<typeof tokenListResponseSchema>;

export const createTokenResponseSchema = z.object({
  token: apiTokenSchema,
  /** The bearer token itself (`bw_...`), shown this once. */
  secret: z.string(),
});
export type CreateTokenResponse = z.infer<typeof createTokenResponseSchema>;
