import { describe, expect, it } from 'vitest';
import { JobWake, jobsQueued } from './wake';

const never = new AbortController().signal;

describe('JobWake', () => {
	it('ends a sleep when this process queues a job, once it listens', async () => {
		const wake = new JobWake().listen();
		try {
			const slept = wake.sleep(60_000, never);
			jobsQueued();
			expect(await slept).toBe(true);
		} finally {
			wake.close();
		}
	});

	it('does not lose a job queued between reading the mark and going to sleep', async () => {
		const wake = new JobWake().listen();
		try {
			const mark = wake.mark;
			// The loop is asking the database for a job when another request queues one.
			jobsQueued();
			expect(await wake.sleep(60_000, never, mark)).toBe(true);
		} finally {
			wake.close();
		}
	});

	it('sleeps its full time when nothing is queued, and hears nothing once closed', async () => {
		const wake = new JobWake().listen();
		wake.close();
		const slept = wake.sleep(30, never);
		jobsQueued();
		expect(await slept).toBe(false);
	});

	it('wakes every sleeper, and an abort ends a sleep too', async () => {
		const wake = new JobWake().listen();
		try {
			const a = wake.sleep(60_000, never);
			const b = wake.sleep(60_000, never);
			jobsQueued();
			expect(await Promise.all([a, b])).toEqual([true, true]);
			const stop = new AbortController();
			const c = wake.sleep(60_000, stop.signal);
			stop.abort();
			expect(await c).toBe(false);
			expect(await wake.sleep(60_000, stop.signal)).toBe(false);
		} finally {
			wake.close();
		}
	});

	it('leaves no listener behind on the process', () => {
		const before = process.listenerCount('shellgate:jobs-queued');
		const wake = new JobWake().listen().listen();
		expect(process.listenerCount('shellgate:jobs-queued')).toBe(before + 1);
		wake.close();
		expect(process.listenerCount('shellgate:jobs-queued')).toBe(before);
	});
});
