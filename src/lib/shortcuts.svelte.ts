import { untrack } from 'svelte';

// Keyboard shortcuts that `?` lists. The app layout owns the ones that work everywhere; a page adds
// its own with pageShortcuts(), which drops them again when the page goes.
export interface Shortcut {
	keys: string;
	does: string;
}
export interface ShortcutGroup {
	title: string;
	items: Shortcut[];
	/** Lower first; a page's own keys (0) come before the layout's navigation (1). */
	order?: number;
}

const groups = $state<{ list: ShortcutGroup[] }>({ list: [] });

/** Call during a page's or component's initialisation; the getter may read state (roles, say). */
export function pageShortcuts(get: () => ShortcutGroup): void {
	$effect(() => {
		const group = get();
		groups.list = [...untrack(() => groups.list), group];
		return () => {
			groups.list = untrack(() => groups.list).filter((g) => g !== group);
		};
	});
}

export function currentPageShortcuts(): ShortcutGroup[] {
	return [...groups.list].sort((a, b) => (a.order ?? 0) - (b.order ?? 0));
}

/** True when a key press is typing (into a field) rather than a shortcut. */
export function isTyping(e: KeyboardEvent): boolean {
	const t = e.target as HTMLElement | null;
	return !!t?.closest?.('input, textarea, select, [contenteditable]') || e.metaKey || e.ctrlKey || e.altKey;
}
