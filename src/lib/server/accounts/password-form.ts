import { z } from 'zod';
import { NewPasswordSchema } from './schemas';

/** A new password typed twice, with the link secret it belongs to. */
export const NewPasswordFormSchema = z
	.object({ token: z.string().min(1).max(64), password: NewPasswordSchema, confirm: z.string() })
	.refine((form) => form.password === form.confirm, { path: ['confirm'], message: 'The two passwords differ.' });
