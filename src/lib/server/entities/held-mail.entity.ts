import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity';
import { VersionLifecycle } from './version-lifecycle.entity';

/**
 * Mail about a version under embargo, held for a recipient outside the owning group until the embargo
 * ends (released early or its date passed); `sentAt` is set once it has gone out.
 */
export const HeldMail = defineEntity({
	name: 'HeldMail',
	tableName: 'app_held_mail',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		lifecycle: p.manyToOne(VersionLifecycle).deleteRule('cascade').index(),
		recipient: p.manyToOne(User).deleteRule('cascade'),
		subject: p.text(),
		text: p.text(),
		heldAt: p.datetime().onCreate(() => new Date()),
		sentAt: p.datetime().nullable()
	})
});

export type HeldMailEntity = InferEntity<typeof HeldMail>;
