/**
 * Entry point of the file readers: picks STL, PLY or OBJ by extension (case-insensitive), or by
 * content when the extension is missing or unknown, and returns flat buffers plus read statistics.
 */
import { MeshReadError, type ParsedMesh, type ReadOptions } from './types';
import { isBinaryStlSize, looksLikeAsciiStl, parseStl } from './parse-stl';
import { parsePly } from './parse-ply';
import { parseObj } from './parse-obj';

export type MeshFileKind = 'stl' | 'ply' | 'obj';

/** Extension of a file name, lower-case, without the dot ('' when there is none). */
function extensionOf(fileName: string): string {
	const base = fileName.slice(Math.max(fileName.lastIndexOf('/'), fileName.lastIndexOf('\\')) + 1);
	const dot = base.lastIndexOf('.');
	return dot > 0 ? base.slice(dot + 1).toLowerCase() : '';
}

/** Guesses the format from the first bytes; null when none fits. */
export function sniffFormat(bytes: Uint8Array): MeshFileKind | null {
	if (bytes.length >= 4 && bytes[0] === 112 && bytes[1] === 108 && bytes[2] === 121 && (bytes[3] === 10 || bytes[3] === 13)) return 'ply';
	if (isBinaryStlSize(bytes) || looksLikeAsciiStl(bytes)) return 'stl';
	// OBJ: text whose first statements include 'v ' or 'f ' lines.
	const head = bytes.subarray(0, Math.min(bytes.length, 4096));
	for (let i = 0; i < head.length; i++) {
		const c = head[i];
		if (c === 0 || (c < 32 && c !== 9 && c !== 10 && c !== 13)) return null;
	}
	const text = new TextDecoder().decode(head);
	if (/^(v|f)[ \t]/m.test(text)) return 'obj';
	return null;
}

export function readMesh(bytes: Uint8Array, fileName: string, opts: ReadOptions = {}): ParsedMesh {
	const ext = extensionOf(fileName);
	let kind: MeshFileKind | null = ext === 'stl' || ext === 'ply' || ext === 'obj' ? ext : null;
	if (!kind) {
		if (bytes.length === 0) throw new MeshReadError(`'${fileName}' is empty`);
		kind = sniffFormat(bytes);
		if (!kind) {
			throw new MeshReadError(
				`cannot tell the format of '${fileName}': the name does not end in .stl, .ply or .obj and the content matches none of them`
			);
		}
	}
	try {
		if (kind === 'stl') return parseStl(bytes, opts);
		if (kind === 'ply') return parsePly(bytes, opts);
		return parseObj(bytes, opts);
	} catch (e) {
		// A file named .stl that holds OBJ text (and so on): say so rather than only what failed.
		const actual = e instanceof MeshReadError ? sniffFormat(bytes) : null;
		if (actual && actual !== kind) {
			throw new MeshReadError(`${e instanceof Error ? e.message : e} (the content looks like ${actual.toUpperCase()}, not ${kind.toUpperCase()})`);
		}
		throw e;
	}
}
