import { z } from 'zod';
import { GROUP_STANDINGS, ROLES, TOKEN_SCOPES } from '../entities/index';
import { EmailSchema } from '../accounts/schemas';
import { describeOperation, registerApiSchema } from './schema-registry';

const ADD_MEMBER_OPERATION = 'POST /api/v1/groups/{slug}/members';

export const MeSchema = registerApiSchema(
	z.object({
		id: z.uuid(),
		email: z.string(),
		display_name: z.string(),
		roles: z.array(z.enum(ROLES)),
		authenticated_by: z.enum(['session', 'token']),
		token_scopes: z.array(z.enum(TOKEN_SCOPES)).nullable()
	}),
	{ id: 'Me', description: 'The person the request acts for, and how it was authenticated.' }
);

export const GroupSchema = registerApiSchema(
	z.object({ slug: z.string(), name: z.string(), description: z.string().nullable() }),
	{ id: 'Group', description: 'A research group that owns relations and calibrator sets.' }
);

export const GroupMemberSchema = registerApiSchema(
	z.object({ user_id: z.uuid(), display_name: z.string(), email: z.string(), standing: z.enum(GROUP_STANDINGS) }),
	{ id: 'GroupMember', description: 'A member of a group; managers add and remove members.' }
);

export const AddGroupMemberSchema = registerApiSchema(
	z.object({ email: EmailSchema, standing: z.enum(GROUP_STANDINGS).default('member') }).strict(),
	{
		id: 'AddGroupMember',
		description:
			'Adds a person to a group by e-mail address (or changes their standing); an address without an account is invited.'
	}
);

export const GroupMemberAddedSchema = registerApiSchema(
	z.object({ group: z.string(), email: z.string(), standing: z.enum(GROUP_STANDINGS) }),
	{
		id: 'GroupMemberAdded',
		description:
			'The same answer whether or not the address had an account (someone without one is mailed an invitation).',
		responseFor: [ADD_MEMBER_OPERATION]
	}
);

describeOperation(ADD_MEMBER_OPERATION, {
	responses: { '201': { description: 'Added, or invited into the group', schema: 'GroupMemberAdded' } }
});
