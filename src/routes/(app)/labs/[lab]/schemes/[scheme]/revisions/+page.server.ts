import { z } from 'zod';
import { requireLab, requireUserPage } from '$lib/server/access';
import { getRevision, getScheme, listRevisions } from '$lib/server/schemes';
import { diffSchemes } from '$lib/scheme-diff';
import type { PageServerLoad } from './$types';

const revisionNumber = z.coerce.number().int().positive();

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab } = await requireLab(user, params.lab, 'read');
	const scheme = await getScheme(lab.id, params.scheme);
	const revisions = await listRevisions(lab.id, params.scheme);

	const fromText = url.searchParams.get('from');
	const toText = url.searchParams.get('to');
	let compare: { from: number; to: number; diff: ReturnType<typeof diffSchemes> } | null = null;
	let compareError: string | null = null;
	if (fromText !== null || toText !== null) {
		const from = revisionNumber.safeParse(fromText);
		const to = revisionNumber.safeParse(toText);
		const known = new Set(revisions.map((r) => r.number));
		if (!from.success || !to.success) compareError = 'Choose two revisions to compare (both “from” and “to”).';
		else if (!known.has(from.data) || !known.has(to.data))
			compareError = `This scheme has revisions 1 to ${scheme.latest.number}; revision ${!known.has(from.data) ? from.data : to.data} does not exist.`;
		else {
			const [before, after] = await Promise.all([getRevision(lab.id, params.scheme, from.data), getRevision(lab.id, params.scheme, to.data)]);
			compare = { from: from.data, to: to.data, diff: diffSchemes(before.scheme, after.scheme) };
		}
	}
	return { scheme: { id: scheme.id, name: scheme.name, latest: scheme.latest.number }, revisions, compare, compareError };
};
