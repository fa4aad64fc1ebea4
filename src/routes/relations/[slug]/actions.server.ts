import { error, type RequestEvent } from '@sveltejs/kit';
import { orActionFailure } from '$lib/server/catalogue/page-errors';
import { actorOf, readerOf, versionParam } from '$lib/server/registry/http';
import { watchRelation } from '$lib/server/registry/relations';
import { reproduceVersion, reproductionToWire } from '$lib/server/registry/reproduce';

/** Form actions shared by the relation page and the version page. */
export const watchAction = (event: RequestEvent, watching: boolean) =>
	orActionFailure('watch', async () => {
		const slug = event.params.slug ?? '';
		await watchRelation(event.locals.em, actorOf(event.locals), slug, watching);
		return { action: 'watch', watching };
	});

export const reproduceAction = (event: RequestEvent) =>
	orActionFailure('reproduce', async () => {
		const form = await event.request.formData();
		const raw = String(event.params.n ?? form.get('version') ?? '');
		if (!/^[1-9]\d{0,8}$/.test(raw)) error(400, 'Say which version to reproduce.');
		const version = versionParam(raw);
		const reproduction = await reproduceVersion(
			event.locals.em,
			readerOf(event.locals),
			event.params.slug ?? '',
			version,
			{ signedIn: event.locals.user !== null }
		);
		return { action: 'reproduce', version, result: reproductionToWire(reproduction) };
	});
