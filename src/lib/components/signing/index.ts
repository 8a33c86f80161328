export { default as SignDialog } from './SignDialog.svelte';
export { default as SignatureManifest } from './SignatureManifest.svelte';
