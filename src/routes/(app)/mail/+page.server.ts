import { requireUserPage } from '$lib/server/access';
import { caughtMailFor, caughtMessageFor } from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

/** The signed-in person's own caught mail; `?open=` reaches only a message addressed to them. */
export const load: PageServerLoad = async ({ locals, url }) => {
	const user = requireUserPage(locals, url);
	const messages = await caughtMailFor(user.email);
	const asked = url.searchParams.get('open');
	const open = asked === null ? (messages[0]?.id ?? 0) : Number(asked);
	const selected = messages.find((m) => m.id === open) ?? (await caughtMessageFor(user.email, open));
	return { messages, open, selected, address: user.email };
};
