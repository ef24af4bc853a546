/**
 * Type declarations for the parts of jstat 1.9 (JavaScript statistical library) that Paretherm uses.
 * The package ships no declarations; its CommonJS export is an object holding `jStat`.
 */
declare module 'jstat' {
	interface NormalDistribution {
		/** Cumulative distribution function Φ((x − mean)/std). */
		cdf(x: number, mean: number, std: number): number;
		/** Quantile (inverse of the cumulative distribution). */
		inv(p: number, mean: number, std: number): number;
		pdf(x: number, mean: number, std: number): number;
	}
	interface JStat {
		normal: NormalDistribution;
		erf(x: number): number;
		erfcinv(p: number): number;
	}
	const pkg: { jStat: JStat };
	export default pkg;
}
