import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requestPasswordReset } from '$lib/server/accounts/account-service';
import { EmailSchema } from '$lib/server/accounts/schemas';
import { auditContext } from '$lib/server/auth/request-context';
import { publicOrigin } from '$lib/server/config';
import { formErrors, textFields, type FormErrors } from '$lib/server/forms';
import { logger } from '$lib/server/logger';
import type { Actions } from './$types';

const ResetRequestSchema = z.object({ email: EmailSchema });

export const actions: Actions = {
	default: async (event) => {
		const fields = textFields(await event.request.formData());
		const parsed = ResetRequestSchema.safeParse(fields);
		if (!parsed.success) return fail(400, { email: fields.email ?? '', errors: formErrors(parsed.error), sent: false });
		const { delivery } = await requestPasswordReset(
			event.locals.em,
			parsed.data.email,
			publicOrigin(),
			auditContext(event)
		);
		// Not awaited: answering only after the mail left would reveal that the account exists.
		delivery.catch((error: Error) => logger.error({ err: error }, 'reset mail failed'));
		return { email: parsed.data.email, errors: {} as FormErrors, sent: true };
	}
};
