/** Recorded with every result so a reproduction can use the same engine; keep equal to package.json's version. */
export const ENGINE_VERSION = 'evenhand-stats 0.2.0';
