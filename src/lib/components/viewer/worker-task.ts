/**
 * One web worker per task: started with its request, ended when the task says it is done, when it
 * crashes, or when the caller stops it (an effect's cleanup). The viewer's three workers (mesh,
 * compare revision, deviation) all run through this.
 */
export function runWorker<Request, Reply>(
	make: () => Worker,
	/** The request, or a promise of it with its transfer list (the worker starts at once, the request follows). */
	request: Request | Promise<{ request: Request; transfer: Transferable[] } | null>,
	transfer: Transferable[],
	onReply: (reply: Reply, done: () => void) => void,
	onCrash: (message: string) => void
): () => void {
	const worker = make();
	let ended = false;
	const done = () => {
		if (ended) return;
		ended = true;
		worker.terminate();
	};
	worker.onmessage = (ev: MessageEvent<Reply>) => {
		if (!ended) onReply(ev.data, done);
	};
	worker.onerror = (e) => {
		if (ended) return;
		onCrash(e.message || 'unknown error');
		done();
	};
	if (request instanceof Promise) {
		// The worker's module loads meanwhile; null: nothing to ask (the caller already reported why).
		request.then((r) => {
			if (ended) return;
			if (r) worker.postMessage(r.request, r.transfer);
			else done();
		});
	} else worker.postMessage(request, transfer);
	return done;
}
