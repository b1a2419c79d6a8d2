// Shared UI components and their pure helpers.
export { default as BandMark } from './BandMark.svelte';
export { default as Button } from './Button.svelte';
export { default as Caution } from './Caution.svelte';
export { default as Mark } from './Mark.svelte';
export { default as PageHeader } from './PageHeader.svelte';
export { default as Panel } from './Panel.svelte';
export { default as Stat } from './Stat.svelte';
export { default as StockBadge } from './StockBadge.svelte';
export { default as TextField } from './TextField.svelte';
export { default as ThemeToggle } from './ThemeToggle.svelte';
export * from './bands';
export * from './stock';
