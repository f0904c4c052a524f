import { z } from 'zod';

export const signInSchema = z.object({
  email: z.email().max(254),
  password: z.string().min(1).max(200),
});
export type SignInBody = z.infer<typeof signInSchema>;

export interface SessionUser {
  id: string;
  email: string;
  name: string;
}

export interface SessionResponse {
  user: SessionUser | null;
  csrfToken: string;
}
