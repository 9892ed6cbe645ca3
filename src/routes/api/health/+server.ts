import { json } from '@sveltejs/kit';
import { version } from '$app/environment';
import { databaseAnswers } from '$lib/server/db';
import { ENGINE_VERSION } from '$lib/engine';

/** Liveness for people and scripts: the app version and whether PostgreSQL answers. */
export async function GET() {
	const database = await databaseAnswers();
	return json(
		{ status: database ? 'ok' : 'degraded', version, engineVersion: ENGINE_VERSION, database: database ? 'up' : 'down' },
		{ status: database ? 200 : 503, headers: { 'cache-control': 'no-store' } }
	);
}
