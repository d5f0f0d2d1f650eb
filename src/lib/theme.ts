// The colour theme: the person's choice in this browser (light, dark), or the system's preference.
// app.html applies it before the first paint; this module changes it afterwards.
export type ThemeChoice = 'system' | 'light' | 'dark';
export const THEME_KEY = 'shellgate-theme';

export function readChoice(): ThemeChoice {
	try {
		const v = localStorage.getItem(THEME_KEY);
		return v === 'light' || v === 'dark' ? v : 'system';
	} catch {
		return 'system';
	}
}

export function resolve(choice: ThemeChoice): 'light' | 'dark' {
	if (choice !== 'system') return choice;
	return window.matchMedia?.('(prefers-color-scheme: light)').matches ? 'light' : 'dark';
}

export function applyChoice(choice: ThemeChoice): void {
	try {
		if (choice === 'system') localStorage.removeItem(THEME_KEY);
		else localStorage.setItem(THEME_KEY, choice);
	} catch {
		// Storage refused (private mode): the choice lasts for this page only.
	}
	document.documentElement.dataset.theme = resolve(choice);
}

/** Follows the system while the choice is 'system'; returns the unsubscribe. */
export function followSystem(getChoice: () => ThemeChoice): () => void {
	const mq = window.matchMedia?.('(prefers-color-scheme: light)');
	if (!mq) return () => {};
	const on = () => {
		if (getChoice() === 'system') document.documentElement.dataset.theme = resolve('system');
	};
	mq.addEventListener('change', on);
	return () => mq.removeEventListener('change', on);
}
