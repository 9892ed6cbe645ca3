/**
 * Child process of the lost-mail test: submits the audits named in SUBMIT_JOB (JSON) for review, a few at a time,
 * until the parent kills it with SIGKILL at a random moment. Prints "ready" once loaded and "done" at the end.
 */
import { submitForReview } from '../../../src/lib/server/reviews';
import type { LabAccess } from '../../../src/lib/server/access';

const job = JSON.parse(process.env.SUBMIT_JOB ?? '{}') as { access: LabAccess; auditIds: string[] };
const queue = [...job.auditIds];
process.stdout.write('ready\n');
await Promise.all(
	[0, 1, 2].map(async () => {
		for (let id = queue.shift(); id; id = queue.shift()) {
			await submitForReview(job.access, id, 'submitted by a process that may be killed');
			process.stdout.write(`committed ${id}\n`);
		}
	})
);
process.stdout.write('done\n');
process.exit(0);
