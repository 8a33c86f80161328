export { default as ReviewItemCard } from './ReviewItemCard.svelte';
export { default as DispositionPanel } from './DispositionPanel.svelte';
