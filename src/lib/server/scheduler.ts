// Periodic jobs every app process runs: maintenance falling due, no-shows, certifications
// about to expire.
// Each job is safe to run from several processes at once (row locks and dedupe keys).
import { config } from './config';
import { logger, noteSchedulerRun, noteSchedulerStart } from './observability';
import { remindExpiringCertifications } from './services/certification-reminders';
import { notifyDueTasks } from './services/maintenance';
import { markNoShows } from './services/no-shows';
import { finishOutageCancellations } from './services/outages';

const jobs: { name: string; run: () => Promise<unknown> }[] = [
	{ name: 'maintenance due', run: () => notifyDueTasks() },
	{ name: 'no-shows', run: () => markNoShows() },
	{ name: 'certification reminders', run: () => remindExpiringCertifications() },
	{ name: 'outage cancellations', run: () => finishOutageCancellations() }
];

let timer: ReturnType<typeof setTimeout> | undefined;
let stopped = false;

async function tick() {
	const failed: string[] = [];
	for (const job of jobs) {
		try {
			await job.run();
		} catch (e) {
			failed.push(job.name);
			logger.error({ job: job.name, err: e }, 'scheduler job failed');
		}
	}
	// Readiness (/api/health/ready) reads when this process last finished a round.
	noteSchedulerRun(failed);
	if (!stopped) timer = setTimeout(tick, config.schedulerPollMs);
}

/** Started by the server's `init` hook (hooks.server.ts), unless SCHEDULER=off. */
export function startScheduler() {
	stopped = false;
	noteSchedulerStart();
	timer = setTimeout(tick, 1_000);
}

export function stopScheduler() {
	stopped = true;
	clearTimeout(timer);
}
