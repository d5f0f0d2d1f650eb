// The dataset zip beyond 65,535 entries: the classic end record counts entries in 16 bits, so a run
// or project export with more files than that is only readable through the zip64 end record. This
// writes 70,000 small entries through the dataset export's own archive and entry writer and reads
// the result back with two readers: fflate (which follows the zip64 end record) and, as the outside
// reference, Info-ZIP's `unzip -t` (APPNOTE.TXT 4.3.14-4.3.15), when it is installed.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { unzipSync } from 'fflate';
import { describe, expect, it } from 'vitest';
import { appendEntry, datasetArchive } from '../dataset-export';

const ENTRIES = 70_000;
const body = (i: number) => Buffer.from(`solid pod-${i}\nendsolid pod-${i}\n`);
const name = (i: number) => `pod-${Math.floor(i / 1000)}/pod-${i}-rev1.stl`;

// Over 10 s on the 2-core development machine, so not in the normal unit run: SHELLGATE_ZIP64=1 turns it on.
describe.skipIf(process.env.SHELLGATE_ZIP64 !== '1')('the dataset zip beyond 65,535 entries', () => {
	it(`holds all ${ENTRIES.toLocaleString('en')} entries, readable through the zip64 end record`, async () => {
		const t0 = performance.now();
		const archive = datasetArchive();
		const chunks: Buffer[] = [];
		archive.on('data', (c: Buffer) => chunks.push(c));
		const ended = new Promise<void>((resolve, reject) => {
			archive.on('end', resolve);
			archive.on('error', reject);
		});
		for (let i = 0; i < ENTRIES; i++) await appendEntry(archive, Readable.from([body(i)]), name(i));
		await archive.finalize();
		await ended;
		const zip = Buffer.concat(chunks);
		const written = performance.now() - t0;

		// The zip64 end-of-central-directory record and its locator are there (APPNOTE 4.3.14, 4.3.15).
		expect(zip.includes(Buffer.from([0x50, 0x4b, 0x06, 0x06]))).toBe(true);
		expect(zip.includes(Buffer.from([0x50, 0x4b, 0x06, 0x07]))).toBe(true);
		const files = unzipSync(new Uint8Array(zip));
		expect(Object.keys(files)).toHaveLength(ENTRIES);
		for (const i of [0, 1, 65_534, 65_535, 65_536, ENTRIES - 1]) expect(Buffer.from(files[name(i)]).equals(body(i))).toBe(true);

		let infoZip = 'not installed';
		if (existsSync('/usr/bin/unzip')) {
			const dir = mkdtempSync(path.join(tmpdir(), 'sg-zip64-'));
			try {
				writeFileSync(path.join(dir, 'big.zip'), zip);
				const out = execFileSync('/usr/bin/unzip', ['-tqq', path.join(dir, 'big.zip')], { encoding: 'utf8', maxBuffer: 1 << 24 });
				infoZip = `unzip -t: no errors${out.trim() ? ` (${out.trim().slice(0, 80)})` : ''}`;
				const listed = execFileSync('/usr/bin/zipinfo', ['-1', path.join(dir, 'big.zip')], { encoding: 'utf8', maxBuffer: 1 << 26 }).trim().split('\n');
				expect(listed).toHaveLength(ENTRIES);
			} finally {
				rmSync(dir, { recursive: true, force: true });
			}
		}
		console.log(`[zip64] ${ENTRIES} entries, ${(zip.length / 1e6).toFixed(1)} MB written in ${(written / 1000).toFixed(1)} s; fflate read them all; Info-ZIP: ${infoZip}`);
	}, 600_000);
});
