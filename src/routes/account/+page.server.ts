import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { AccountError, changePassword, requestEmailChange, updateProfile } from '$lib/server/accounts/account-service';
import { recordAudit } from '$lib/server/accounts/audit';
import { toGroupDto, toProfileDto, toSessionDto, toTokenDto } from '$lib/server/accounts/dto';
import { groupsOf } from '$lib/server/accounts/group-service';
import {
	EmailSchema,
	NewPasswordSchema,
	ProfileSchema,
	ScopesSchema,
	TokenLifetimeSchema,
	TokenNameSchema
} from '$lib/server/accounts/schemas';
import { createToken, listTokens, revokeToken } from '$lib/server/accounts/token-service';
import { requireUser } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { appLucia } from '$lib/server/auth/request-lucia';
import { clearSessionCookie } from '$lib/server/auth/session';
import { publicOrigin } from '$lib/server/config';
import { Session, User } from '$lib/server/entities/index';
import { formErrors, textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const NOTICES: Record<string, string> = { email: 'Your new address is confirmed.' };

export const load: PageServerLoad = async ({ locals, url }) => {
	const viewer = requireUser();
	const em = locals.em;
	const [user, tokens, sessions, memberships] = await Promise.all([
		em.findOneOrFail(User, { id: viewer.id }),
		listTokens(em, viewer.id),
		em.find(Session, { user: viewer.id, expiresAt: { $gt: new Date() } }, { orderBy: { createdAt: 'desc' } }),
		groupsOf(em, viewer.id)
	]);
	return {
		profile: toProfileDto(user),
		tokens: tokens.map(toTokenDto),
		sessions: sessions.map((session) => toSessionDto(session, locals.session?.id ?? null)),
		groups: memberships.map((membership) => ({ ...toGroupDto(membership.group), standing: membership.standing })),
		notice: NOTICES[url.searchParams.get('notice') ?? ''] ?? null
	};
};

const PasswordChangeSchema = z
	.object({
		current: z.string().min(1, 'Enter your current password.'),
		password: NewPasswordSchema,
		confirm: z.string()
	})
	.refine((form) => form.password === form.confirm, { path: ['confirm'], message: 'The two passwords differ.' });

const TokenSchema = z.object({ name: TokenNameSchema, lifetimeDays: TokenLifetimeSchema, scopes: ScopesSchema });

export const actions: Actions = {
	profile: async ({ request, locals }) => {
		const user = requireUser();
		const fields = textFields(await request.formData());
		const parsed = ProfileSchema.safeParse(fields);
		if (!parsed.success) return fail(400, { section: 'profile', values: fields, errors: formErrors(parsed.error) });
		await updateProfile(locals.em, user.id, parsed.data);
		return { section: 'profile', saved: true };
	},

	email: async (event) => {
		const user = requireUser();
		const fields = textFields(await event.request.formData());
		const parsed = z.object({ email: EmailSchema }).safeParse(fields);
		if (!parsed.success) return fail(400, { section: 'email', values: fields, errors: formErrors(parsed.error) });
		try {
			await requestEmailChange(event.locals.em, user.id, parsed.data.email, publicOrigin(), auditContext(event));
		} catch (cause) {
			if (cause instanceof AccountError) {
				return fail(400, { section: 'email', values: fields, errors: { email: [cause.message] } });
			}
			throw cause;
		}
		return { section: 'email', sentTo: parsed.data.email };
	},

	password: async (event) => {
		const user = requireUser();
		const parsed = PasswordChangeSchema.safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { section: 'password', errors: formErrors(parsed.error) });
		const change = await changePassword(
			event.locals.em,
			user.id,
			parsed.data.current,
			parsed.data.password,
			auditContext(event),
			event.locals.session?.id ?? null
		);
		if (!change.changed)
			return fail(400, { section: 'password', errors: { current: ['That is not your current password.'] } });
		return {
			section: 'password',
			saved: true,
			sessionsEnded: change.sessionsEnded,
			tokensRevoked: change.tokensRevoked
		};
	},

	createToken: async (event) => {
		const user = requireUser();
		const data = await event.request.formData();
		const fields = textFields(data);
		const parsed = TokenSchema.safeParse({ ...fields, scopes: data.getAll('scopes') });
		if (!parsed.success) return fail(400, { section: 'tokens', values: fields, errors: formErrors(parsed.error) });
		const { secret, token } = await createToken(event.locals.em, user.id, parsed.data, auditContext(event));
		// Shown once, in this response only; the database keeps its hash.
		return { section: 'tokens', created: { name: token.name, secret } };
	},

	revokeToken: async (event) => {
		const user = requireUser();
		const parsed = z.object({ id: z.uuid() }).safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { section: 'tokens', errors: { id: ['Choose a token.'] } });
		const revoked = await revokeToken(event.locals.em, parsed.data.id, user.id, auditContext(event));
		if (!revoked) error(404, 'No such active token of yours.');
		return { section: 'tokens', revoked: true };
	},

	endSession: async (event) => {
		const user = requireUser();
		const parsed = z.object({ id: z.string().length(64) }).safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { section: 'sessions', errors: { id: ['Choose a session.'] } });
		const lucia = await appLucia();
		const ended = await event.locals.em.nativeDelete(Session, { id: parsed.data.id, user: user.id });
		if (ended === 0) error(404, 'No such session of yours.');
		if (parsed.data.id === event.locals.session?.id) {
			clearSessionCookie(event.cookies, lucia);
			redirect(303, '/');
		}
		return { section: 'sessions', ended: true };
	},

	signOutEverywhere: async (event) => {
		const user = requireUser();
		const lucia = await appLucia();
		await lucia.invalidateUserSessions(user.id);
		clearSessionCookie(event.cookies, lucia);
		await recordAudit(event.locals.em, 'sign-out-everywhere', { ...auditContext(event), subject: user.id });
		redirect(303, '/sign-in');
	}
};
