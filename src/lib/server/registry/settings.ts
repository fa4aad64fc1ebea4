import type { EntityManager } from '@mikro-orm/postgresql';
import { z } from 'zod';
import { Setting } from '../entities/setting.entity';
import type { Actor } from './actor';
import { auditRegistry } from './audit';

/** Site-wide settings with their defaults; an admin may change them. */
const SETTINGS = {
	default_required_approvals: z.number().int().min(1).max(10).default(1)
} as const;
export type SettingKey = keyof typeof SETTINGS;

export async function getSetting<K extends SettingKey>(
	em: EntityManager,
	key: K
): Promise<z.infer<(typeof SETTINGS)[K]>> {
	const row = await em.findOne(Setting, { key });
	const parsed = SETTINGS[key].safeParse(row?.value ?? undefined);
	return parsed.success ? parsed.data : SETTINGS[key].parse(undefined);
}

export async function setSetting<K extends SettingKey>(
	em: EntityManager,
	actor: Actor | null,
	key: K,
	value: z.input<(typeof SETTINGS)[K]>
): Promise<void> {
	const parsed = SETTINGS[key].parse(value);
	await em.upsert(Setting, { key, value: parsed, updatedAt: new Date() });
	await auditRegistry(em, 'setting-changed', actor, key, { value: parsed });
}
