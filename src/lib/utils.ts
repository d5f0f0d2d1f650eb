import { clsx, type ClassValue } from 'clsx';
import { twMerge } from 'tailwind-merge';

export function cn(...inputs: ClassValue[]): string {
	return twMerge(clsx(inputs));
}

export function fmtInt(n: number | null | undefined): string {
	return n == null ? '—' : n.toLocaleString('en-US');
}

/** Engineering-friendly number: up to 4 significant digits, no exponent for ordinary sizes. */
export function fmtNum(n: number | null | undefined, digits = 4): string {
	if (n == null || !Number.isFinite(n)) return '—';
	if (n === 0) return '0';
	const a = Math.abs(n);
	if (a >= 1e6 || a < 1e-3) return n.toExponential(digits - 1);
	return Number(n.toPrecision(digits)).toLocaleString('en-US', { maximumFractionDigits: 6 });
}

export function fmtBytes(n: number): string {
	if (n < 1024) return `${n} B`;
	if (n < 1024 ** 2) return `${(n / 1024).toFixed(1)} KB`;
	if (n < 1024 ** 3) return `${(n / 1024 ** 2).toFixed(1)} MB`;
	return `${(n / 1024 ** 3).toFixed(2)} GB`;
}

export function fmtAge(d: Date | string | number, now = Date.now()): string {
	const ms = now - new Date(d).getTime();
	const m = Math.round(ms / 60000);
	if (m < 1) return 'just now';
	if (m < 60) return `${m} min ago`;
	const h = Math.round(m / 60);
	if (h < 48) return `${h} h ago`;
	return `${Math.round(h / 24)} days ago`;
}
