/**
 * mulberry32: a small, fast, seeded pseudo-random generator returning numbers in [0, 1).
 * Used wherever results must be the same on every machine: the demo seed, property tests, benchmarks.
 * Not for anything secret (use node:crypto for that).
 */
export function mulberry32(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}
