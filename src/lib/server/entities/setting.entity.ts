import { defineEntity, type InferEntity } from '@mikro-orm/core';

/** Site-wide settings an admin may change, e.g. the default number of approvals a version needs. */
export const Setting = defineEntity({
	name: 'Setting',
	tableName: 'app_setting',
	properties: (p) => ({
		key: p.string().length(64).primary(),
		value: p.json<unknown>(),
		updatedAt: p
			.datetime()
			.onCreate(() => new Date())
			.onUpdate(() => new Date())
	})
});

export type SettingEntity = InferEntity<typeof Setting>;
