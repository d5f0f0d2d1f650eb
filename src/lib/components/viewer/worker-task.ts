/**
 * One web worker per task: started with its request, ended when the task says it is done, when it
 * crashes, or when the caller stops it (an effect's cleanup). The viewer's three workers (mesh,
 * compare revision, deviation) all run through this.
 */
export function runWorker<Request, Reply>(
	make: () => Worker,
	request: Request,
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
	worker.postMessage(request, transfer);
	return done;
}
