/** The viewer's standard views and keyboard shortcuts, shared by the toolbar, its help and the canvas's key handler. */
import type { ViewName } from './scene';

export const VIEWS: { name: ViewName; label: string; key: string }[] = [
	{ name: '+x', label: '+X', key: '1' },
	{ name: '-x', label: '−X', key: '2' },
	{ name: '+y', label: '+Y', key: '3' },
	{ name: '-y', label: '−Y', key: '4' },
	{ name: '+z', label: '+Z', key: '5' },
	{ name: '-z', label: '−Z', key: '6' }
];

export const SHORTCUTS: [string, string][] = [
	['F', 'fit the part in view'],
	['1 – 6', 'look from +X, −X, +Y, −Y, +Z, −Z'],
	['W', 'wireframe on/off'],
	['S', 'section plane on/off'],
	['[ ]', 'move the section plane'],
	['C', 'colour by shell'],
	['Esc', 'clear the highlight'],
	['?', 'this help'],
	['drag', 'orbit'],
	['right-drag', 'pan'],
	['wheel', 'zoom'],
	['click', 'drop a pin for a comment']
];
