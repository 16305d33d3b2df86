// Kept apart from channel-threads.ts so the server's settings can name the default without
// loading the thread code (and its bundler) into every process that reads them.

/**
 * The warm-up capture's length a server uses unless told (ANALYSIS_WARM_UP_SECONDS). 30 s rather
 * than 10: over eight runs each, alternated, the first 5-minute capture after the warm-up took a
 * median of 0.38 s against 0.39 s, and 0.33 s against 0.37 s in the best three. It costs about
 * 1 s of both cores at start, off any request's path.
 */
export const DEFAULT_WARM_UP_SECONDS = 30;
