import { z } from 'zod';
import { can, requireLab, requireUserPage } from '$lib/server/access';
import { listSchemes, SCHEME_SORTS } from '$lib/server/schemes';
import type { PageServerLoad } from './$types';

/** Query parameters of the list; anything malformed falls back to the default rather than failing the page. */
const listQuery = z.object({
	q: z.string().trim().max(200).catch(''),
	sort: z.enum(SCHEME_SORTS).catch('updated'),
	dir: z.enum(['asc', 'desc']).optional().catch(undefined),
	page: z.coerce.number().int().min(1).max(100_000).catch(1)
});

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab, role } = await requireLab(user, params.lab, 'read');
	const query = listQuery.parse({
		q: url.searchParams.get('q') ?? '',
		sort: url.searchParams.get('sort') ?? 'updated',
		dir: url.searchParams.get('dir') ?? undefined,
		page: url.searchParams.get('page') ?? 1
	});
	const dir = query.dir ?? (query.sort === 'name' ? 'asc' : 'desc');
	const list = await listSchemes(lab.id, { q: query.q || undefined, sort: query.sort, dir, page: query.page, pageSize: 20 });
	return {
		query: { ...query, dir },
		list,
		mayModel: can(role, 'model')
	};
};
