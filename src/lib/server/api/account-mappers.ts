import type { z } from 'zod';
import type { toGroupDto, toMemberDto } from '../accounts/dto';
import type { AuthUser, TokenCredential } from '../auth/principal';
import type { GroupMemberSchema, GroupSchema, MeSchema } from './account-schemas';

/** camelCase DTOs → the API's snake_case JSON, one mapper per resource. */
export function meToWire(user: AuthUser, token: TokenCredential | null): z.infer<typeof MeSchema> {
	return {
		id: user.id,
		email: user.email,
		display_name: user.displayName,
		roles: user.roles,
		authenticated_by: token ? 'token' : 'session',
		token_scopes: token ? token.scopes : null
	};
}

export function groupToWire(group: ReturnType<typeof toGroupDto>): z.infer<typeof GroupSchema> {
	return { slug: group.slug, name: group.name, description: group.description };
}

export function memberToWire(member: ReturnType<typeof toMemberDto>): z.infer<typeof GroupMemberSchema> {
	return { user_id: member.userId, display_name: member.displayName, email: member.email, standing: member.standing };
}
