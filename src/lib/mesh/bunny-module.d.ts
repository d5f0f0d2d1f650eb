// Types for the `bunny` package (test data only): the Stanford bunny as plain arrays.
declare module 'bunny' {
	const bunny: { positions: [number, number, number][]; cells: [number, number, number][] };
	export default bunny;
}
