import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';

/** Caught mail used to be a page of the lab; each person now reads their own at /mail. */
export const load: PageServerLoad = () => {
	redirect(308, '/mail');
};
