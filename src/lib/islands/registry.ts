/**
 * The components a page served without the app's JavaScript (SvelteKit `csr = false`) can bring
 * to life in the browser, by name. `Island.svelte` renders a placeholder with the name and the
 * props; `boot.ts` mounts the component into it when it is needed. Loaded on demand only: this
 * module holds no component code itself.
 */
import type { Component, ComponentProps } from 'svelte';

export const ISLANDS = {
	'level-chart': () => import('$lib/components/RevisionLevelChart.svelte'),
	'picture-preview': () => import('$lib/components/PicturePreview.svelte'),
	'what-if': () => import('$lib/components/WhatIfPanel.svelte'),
	'history-chart': () => import('$lib/components/HistoryChart.svelte'),
	watch: () => import('$lib/components/WatchButton.svelte')
} satisfies Record<string, () => Promise<{ default: Component<never> }>>;

export type IslandName = keyof typeof ISLANDS;
export type IslandProps<N extends IslandName> = ComponentProps<Awaited<ReturnType<(typeof ISLANDS)[N]>>['default']>;

/**
 * When an island starts: `load` at once; `visible` when it comes near the viewport after the
 * visitor first scrolls, types, points or touches (so nothing in the first screen fetches code
 * before anyone has done anything); `open` when the <details> around it is opened.
 */
export const ISLAND_TRIGGERS = ['load', 'visible', 'open'] as const;
export type IslandTrigger = (typeof ISLAND_TRIGGERS)[number];
