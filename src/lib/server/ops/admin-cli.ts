/**
 * `npm run admin -- <verb> [options]`: headless set-up and scripting against the database in
 * DATABASE_URL, or the local cluster of `npm start` when DATABASE_URL is unset. Run without a verb
 * for the list of verbs; every verb is documented in the README.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { MikroORM, type EntityManager } from '@mikro-orm/postgresql';
import config from '../../../../mikro-orm.config';
import { AccountError, invite, setPassword, setRoles, setSuspended } from '../accounts/account-service';
import type { AuditContext } from '../accounts/audit';
import { addMember, createGroup, GroupError } from '../accounts/group-service';
import { EmailSchema, GroupSlugSchema, NewPasswordSchema, RolesSchema, ScopesSchema } from '../accounts/schemas';
import { createToken, listTokens, revokeToken } from '../accounts/token-service';
import { GroupMembership, User } from '../entities/index';
import { setSetting } from '../registry/settings';
import { localDatabaseRoles, localStateDir, openLocalDatabase, type LocalState } from './local-database';
import { PostgresCluster, readJson } from './postgres-cluster';

const USAGE = `npm run admin -- <verb> [options]

  create-user   --email E --name N [--roles curator,reviewer,admin] [--group SLUG[:manager]]... [--invite]
                (without --invite, the password is read from standard input)
  set-password  --email E            (the new password is read from standard input)
  set-roles     --email E --roles curator,reviewer,admin
  list-users
  suspend       --email E            (ends the account's sessions; its tokens stop working)
  reinstate     --email E
  create-group  --slug S --name N [--description D]
  add-member    --group SLUG --email E [--manager]
  create-token  --email E --name N [--scopes read:private,write,review] [--days 90]   (0 days = never expires)
  list-tokens   [--email E]
  revoke-token  --id TOKEN_ID
  set-approvals --count N            (approvals a new relation's versions need unless it says otherwise)`;

const OPERATOR: AuditContext = { actorId: null, clientAddress: 'admin-cli' };

class UsageError extends Error {
	constructor(
		message: string,
		readonly showUsage = false
	) {
		super(message);
	}
}

function list(value: string | undefined): string[] {
	return (value ?? '')
		.split(',')
		.map((item) => item.trim())
		.filter(Boolean);
}

function need<T>(value: T | undefined, name: string): T {
	if (value === undefined || value === '') throw new UsageError(`--${name} is required`, true);
	return value;
}

function parseWith<T>(
	schema: {
		safeParse: (
			v: unknown
		) => { success: true; data: T } | { success: false; error: { issues: { message: string }[] } };
	},
	value: unknown,
	name: string
): T {
	const result = schema.safeParse(value);
	if (!result.success)
		throw new UsageError(`--${name}: ${result.error.issues.map((issue) => issue.message).join('; ')}`);
	return result.data;
}

function readPasswordFromStdin(): string {
	if (process.stdin.isTTY)
		throw new UsageError('pipe the password on standard input, e.g. `printf %s "$PW" | npm run admin -- …`');
	const password = readFileSync(0, 'utf8').replace(/\r?\n$/, '');
	return parseWith(NewPasswordSchema, password, 'password (standard input)');
}

async function userByEmail(em: EntityManager, email: string) {
	const user = await em.findOne(User, { email: email.toLowerCase() });
	if (!user) throw new UsageError(`nobody has the address ${email}`);
	return user;
}

/** DATABASE_URL, or the running local cluster, or the local cluster started for this command. */
async function connect(): Promise<{ url: string; stop: () => void }> {
	if (process.env.DATABASE_URL) return { url: process.env.DATABASE_URL, stop: () => {} };
	const stateDir = localStateDir();
	const state = readJson<LocalState>(join(stateDir, 'database.json'));
	const cluster = new PostgresCluster({
		dataDir: join(stateDir, 'postgres', 'data'),
		runDir: join(stateDir, 'postgres', 'run'),
		port: state?.port ?? 0,
		throwaway: false
	});
	if (state?.port && state.runtimeRole && cluster.isInitialised && cluster.isRunning()) {
		const { runtime, database } = localDatabaseRoles(state);
		return { url: cluster.databaseUrl(runtime, database), stop: () => {} };
	}
	if (!cluster.isInitialised)
		throw new UsageError('there is no local database yet: run `npm start` once, or set DATABASE_URL');
	const database = await openLocalDatabase();
	return { url: database.url, stop: database.stop };
}

async function run(verb: string, args: string[], em: EntityManager): Promise<void> {
	const { values } = parseArgs({
		args,
		options: {
			email: { type: 'string' },
			name: { type: 'string' },
			roles: { type: 'string' },
			group: { type: 'string', multiple: true },
			invite: { type: 'boolean' },
			slug: { type: 'string' },
			description: { type: 'string' },
			manager: { type: 'boolean' },
			scopes: { type: 'string' },
			days: { type: 'string' },
			id: { type: 'string' },
			count: { type: 'string' },
			origin: { type: 'string' }
		},
		strict: true
	});
	const origin = values.origin ?? process.env.ORIGIN ?? 'http://127.0.0.1:3000';

	switch (verb) {
		case 'create-user': {
			const email = parseWith(EmailSchema, need(values.email, 'email'), 'email');
			const groups = (values.group ?? []).map((entry) => {
				const [slug, standing] = entry.split(':');
				if (standing && standing !== 'manager') throw new UsageError(`--group ${entry}: write SLUG or SLUG:manager`);
				return {
					slug: parseWith(GroupSlugSchema, slug, 'group'),
					standing: standing === 'manager' ? ('manager' as const) : ('member' as const)
				};
			});
			const password = values.invite ? null : readPasswordFromStdin();
			const { user, link } = await invite(
				em,
				{
					email,
					displayName: need(values.name, 'name'),
					roles: parseWith(RolesSchema, list(values.roles), 'roles'),
					groups
				},
				origin,
				OPERATOR,
				password === null
			).catch((error: Error) => {
				if (error instanceof AccountError) throw new UsageError(error.message);
				throw error;
			});
			if (password) await setPassword(em, user.id, password, OPERATOR);
			console.log(`created ${user.email} (${user.id}) with roles ${user.roles.join(', ')}`);
			// Without SMTP_URL nothing was mailed; the operator passes the link on instead.
			if (link) console.log(process.env.SMTP_URL ? `invitation mailed to ${user.email}` : `invitation link: ${link}`);
			return;
		}
		case 'set-password': {
			const user = await userByEmail(em, need(values.email, 'email'));
			await setPassword(em, user.id, readPasswordFromStdin(), OPERATOR);
			console.log(`password set for ${user.email}`);
			return;
		}
		case 'set-roles': {
			const user = await userByEmail(em, need(values.email, 'email'));
			const updated = await setRoles(em, user.id, parseWith(RolesSchema, list(values.roles), 'roles'), OPERATOR);
			console.log(`${updated.email}: ${updated.roles.join(', ')}`);
			return;
		}
		case 'suspend':
		case 'reinstate': {
			const user = await userByEmail(em, need(values.email, 'email'));
			await setSuspended(em, user.id, verb === 'suspend', OPERATOR);
			console.log(`${user.email} ${verb === 'suspend' ? 'suspended' : 'reinstated'}`);
			return;
		}
		case 'list-users': {
			const users = await em.find(User, {}, { orderBy: { email: 'asc' } });
			const memberships = await em.find(GroupMembership, {}, { populate: ['group'] });
			for (const user of users) {
				const groups = memberships
					.filter((membership) => membership.user.id === user.id)
					.map((membership) => `${membership.group.slug}${membership.standing === 'manager' ? ':manager' : ''}`);
				console.log(
					[
						user.email,
						user.roles.join(','),
						groups.join(',') || '-',
						user.suspendedAt ? 'suspended' : user.passwordHash ? 'active' : 'invited'
					].join('\t')
				);
			}
			return;
		}
		case 'create-group': {
			const group = await createGroup(
				em,
				{
					slug: parseWith(GroupSlugSchema, need(values.slug, 'slug'), 'slug'),
					name: need(values.name, 'name'),
					description: values.description ?? null
				},
				OPERATOR
			);
			console.log(`created group ${group.slug}`);
			return;
		}
		case 'add-member': {
			const slug = need(values.group?.[0], 'group');
			await addMember(em, slug, need(values.email, 'email'), values.manager ? 'manager' : 'member', OPERATOR);
			console.log(`${values.email} is now a ${values.manager ? 'manager' : 'member'} of ${slug}`);
			return;
		}
		case 'create-token': {
			const user = await userByEmail(em, need(values.email, 'email'));
			const days = Number(values.days ?? '90');
			if (!Number.isInteger(days) || days < 0)
				throw new UsageError('--days must be a whole number of days (0 = never)');
			const { secret, token } = await createToken(
				em,
				user.id,
				{
					name: need(values.name, 'name'),
					scopes: parseWith(ScopesSchema, list(values.scopes), 'scopes'),
					lifetimeDays: days || null
				},
				OPERATOR
			);
			console.error(
				`token ${token.id} for ${user.email}, scopes: ${token.scopes.join(', ') || 'none'}; shown only now:`
			);
			console.log(secret);
			return;
		}
		case 'list-tokens': {
			const owner = values.email ? await userByEmail(em, values.email) : null;
			for (const token of await listTokens(em, owner?.id)) {
				const state = token.revokedAt
					? 'revoked'
					: token.expiresAt && token.expiresAt <= new Date()
						? 'expired'
						: 'active';
				console.log(
					[
						token.id,
						token.user.email,
						token.name,
						`${token.hint}…`,
						token.scopes.join(',') || '-',
						state,
						`expires ${token.expiresAt?.toISOString() ?? 'never'}`,
						`last used ${token.lastUsedAt?.toISOString() ?? 'never'}`
					].join('\t')
				);
			}
			return;
		}
		case 'revoke-token': {
			const id = need(values.id, 'id');
			if (!(await revokeToken(em, id, null, OPERATOR))) throw new UsageError(`no active token ${id}`);
			console.log(`revoked ${id}`);
			return;
		}
		case 'set-approvals': {
			const count = Number(need(values.count, 'count'));
			if (!Number.isInteger(count) || count < 1 || count > 10)
				throw new UsageError('--count must be a whole number from 1 to 10');
			await setSetting(em, null, 'default_required_approvals', count);
			console.log(`new relations need ${count} approval${count === 1 ? '' : 's'} per version`);
			return;
		}
		default:
			throw new UsageError(verb ? `unknown verb "${verb}"` : 'name a verb', true);
	}
}

const [verb = '', ...rest] = process.argv.slice(2);
if (verb === 'help' || verb === '--help' || verb === '') {
	console.log(USAGE);
	process.exit(verb ? 0 : 2);
}

let exitCode = 0;
const database = await connect().catch((error: Error) => {
	console.error(`admin: ${error.message}`);
	process.exit(1);
});
process.env.DATABASE_URL = database.url;
process.env.LOG_LEVEL ??= 'warn';
const orm = await MikroORM.init({ ...config, clientUrl: database.url });
try {
	await run(verb, rest, orm.em.fork());
} catch (error) {
	exitCode = 1;
	if (error instanceof UsageError) console.error(`admin: ${error.message}${error.showUsage ? `\n\n${USAGE}` : ''}`);
	else if (error instanceof GroupError) console.error(`admin: ${error.message}`);
	// parseArgs reports unknown or malformed options as TypeErrors with a code.
	else if (error instanceof TypeError && 'code' in error) console.error(`admin: ${error.message}\n\n${USAGE}`);
	else console.error(error);
} finally {
	await orm.close(true);
	database.stop();
}
process.exit(exitCode);
