import { z } from 'zod';
import { parseOrcid } from '../../orcid';
import { ROLES, TOKEN_SCOPES } from '../entities/index';
import { PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH } from '../auth/password';

/** Input schemas shared by forms, the API and the admin command line. */
export const EmailSchema = z
	.string()
	.trim()
	.toLowerCase()
	.max(320)
	.pipe(z.email({ error: 'Enter an e-mail address.' }));

export const NewPasswordSchema = z
	.string()
	.min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters.`)
	.max(PASSWORD_MAX_LENGTH, `Use at most ${PASSWORD_MAX_LENGTH} characters.`);

export const DisplayNameSchema = z.string().trim().min(1, 'Enter a name.').max(200);

const optionalText = (max: number) =>
	z
		.string()
		.trim()
		.max(max)
		.transform((value) => (value === '' ? null : value));

export const OrcidSchema = z
	.string()
	.trim()
	.transform((value, context) => {
		if (value === '') return null;
		const result = parseOrcid(value);
		if (!result.ok) {
			context.addIssue({ code: 'custom', message: result.message });
			return z.NEVER;
		}
		return result.orcid;
	});

export const ProfileSchema = z.object({
	displayName: DisplayNameSchema,
	affiliation: optionalText(300),
	orcid: OrcidSchema
});
export type ProfileInput = z.output<typeof ProfileSchema>;

export const RolesSchema = z
	.array(z.enum(ROLES))
	.transform((roles) => [...new Set<(typeof ROLES)[number]>(['reader', ...roles])]);
export const ScopesSchema = z.array(z.enum(TOKEN_SCOPES)).transform((scopes) => [...new Set(scopes)]);

export const GroupSlugSchema = z
	.string()
	.trim()
	.toLowerCase()
	.regex(/^[a-z0-9][a-z0-9-]{1,62}[a-z0-9]$/, 'Use 3–64 lower-case letters, digits and hyphens.');

export const TokenNameSchema = z.string().trim().min(1, 'Name the token.').max(100);
export const TokenLifetimeSchema = z.coerce
	.number()
	.int()
	.min(0)
	.max(3650)
	.transform((days) => (days === 0 ? null : days));
