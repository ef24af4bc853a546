/** Paretherm's chart components: one wrapper (EChart), one palette, SI data in, display units out. */
export { default as EChart } from './EChart.svelte';
export { default as ParetoChart } from './ParetoChart.svelte';
export { default as FrontOverlayChart } from './FrontOverlayChart.svelte';
export { default as HeatmapChart } from './HeatmapChart.svelte';
export { default as TraceStack } from './TraceStack.svelte';
export { default as OcpChart } from './OcpChart.svelte';
export * from './palette';
export * from './types';
export * as chartData from './chart-data';
export { default as CheckOverlayChart } from './CheckOverlayChart.svelte';
