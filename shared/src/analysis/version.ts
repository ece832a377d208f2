/** Semantic version of the analysis engine, carried in every result. */
export const ENGINE_VERSION = '2.1.0';
