import { createReadStream } from 'node:fs';
import fs from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import type { FileStore } from '.';

const SHA = /^[0-9a-f]{64}$/;

/** Files under root/ab/cd/<sha256>; the two-level fan-out keeps directories small. */
export class LocalStore implements FileStore {
	readonly backend = 'local' as const;
	constructor(private root: string) {}

	private file(sha256: string): string {
		if (!SHA.test(sha256)) throw new Error(`not a sha256: ${sha256.slice(0, 80)}`);
		return path.join(this.root, sha256.slice(0, 2), sha256.slice(2, 4), sha256);
	}

	async putFile(tmpPath: string, sha256: string): Promise<void> {
		const dest = this.file(sha256);
		await fs.mkdir(path.dirname(dest), { recursive: true });
		if (await this.exists(sha256)) {
			await fs.rm(tmpPath, { force: true });
			return;
		}
		// rename is atomic within one file system, so a reader never sees half a file.
		await fs.rename(tmpPath, dest);
	}

	async exists(sha256: string): Promise<boolean> {
		return fs.access(this.file(sha256)).then(
			() => true,
			() => false
		);
	}

	async read(sha256: string): Promise<Uint8Array> {
		return new Uint8Array(await fs.readFile(this.file(sha256)));
	}

	async stream(sha256: string): Promise<Readable> {
		await fs.access(this.file(sha256));
		return createReadStream(this.file(sha256));
	}

	async delete(sha256: string): Promise<void> {
		await fs.rm(this.file(sha256), { force: true });
	}

	async *list(): AsyncIterable<string> {
		let level1: string[];
		try {
			level1 = await fs.readdir(this.root);
		} catch {
			return;
		}
		for (const a of level1) {
			for (const b of await fs.readdir(path.join(this.root, a)).catch(() => [] as string[])) {
				for (const f of await fs.readdir(path.join(this.root, a, b)).catch(() => [] as string[])) {
					if (SHA.test(f)) yield f;
				}
			}
		}
	}
}
