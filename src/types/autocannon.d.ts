// autocannon ships no type declarations; the load test uses only its promise API and result figures.
declare module 'autocannon' {
	// eslint-disable-next-line @typescript-eslint/no-explicit-any
	const autocannon: (options: Record<string, unknown>) => Promise<any> & { stop?: () => void; on: (event: string, listener: (...args: any[]) => void) => void };
	export default autocannon;
}
