// A seeded pseudo-random number generator, so a draw can be repeated from the seed printed with it.
//
// - Seed text → four 32-bit words: cyrb128, a public-domain string hash (bryc, "Hash functions in
//   JavaScript", github.com/bryc/code, jshash/experimental/cyrb53.js and PRNGs.md). Recalled from memory,
//   not copied from a stored copy; the tests check determinism and uniformity, not reference outputs.
// - Generator: sfc32, Chris Doty-Humphrey's "Small Fast Counting" generator from the PractRand test suite
//   (public domain); 128 bits of state, passes PractRand. Also recalled from memory.
// Neither is cryptographic: this picks which practices to visit, it does not protect a secret.

/** Four 32-bit words from a text (cyrb128). */
export function hashSeed(text: string): [number, number, number, number] {
	let h1 = 1779033703,
		h2 = 3144134277,
		h3 = 1013904242,
		h4 = 2773480762;
	for (let i = 0; i < text.length; i++) {
		const k = text.charCodeAt(i);
		h1 = h2 ^ Math.imul(h1 ^ k, 597399067);
		h2 = h3 ^ Math.imul(h2 ^ k, 2869860233);
		h3 = h4 ^ Math.imul(h3 ^ k, 951274213);
		h4 = h1 ^ Math.imul(h4 ^ k, 2716044179);
	}
	h1 = Math.imul(h3 ^ (h1 >>> 18), 597399067);
	h2 = Math.imul(h4 ^ (h2 >>> 22), 2869860233);
	h3 = Math.imul(h1 ^ (h3 >>> 17), 951274213);
	h4 = Math.imul(h2 ^ (h4 >>> 19), 2716044179);
	h1 ^= h2 ^ h3 ^ h4;
	h2 ^= h1;
	h3 ^= h1;
	h4 ^= h1;
	return [h1 >>> 0, h2 >>> 0, h3 >>> 0, h4 >>> 0];
}

/** A generator of numbers in [0, 1) from a seed text: the same text always gives the same sequence. */
export function seededRandom(seed: string): () => number {
	let [a, b, c, d] = hashSeed(seed);
	const next = () => {
		a >>>= 0;
		b >>>= 0;
		c >>>= 0;
		d >>>= 0;
		let t = (a + b) | 0;
		a = b ^ (b >>> 9);
		b = (c + (c << 3)) | 0;
		c = (c << 21) | (c >>> 11);
		d = (d + 1) | 0;
		t = (t + d) | 0;
		c = (c + t) | 0;
		return (t >>> 0) / 4294967296;
	};
	// Discard the first outputs, as the generator's author advises for a freshly seeded state.
	for (let i = 0; i < 15; i++) next();
	return next;
}

/** A seed text that is easy to print, read aloud and type: 16 lowercase hex digits from a random source. */
export function newSeedText(random: () => number = Math.random): string {
	let s = '';
	for (let i = 0; i < 16; i++) s += Math.floor(random() * 16).toString(16);
	return s;
}
