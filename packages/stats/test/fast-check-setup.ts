import fc from 'fast-check';

// Property tests draw from a fixed seed so a run is reproducible and CI cannot fail by chance; change the
// seed on purpose to explore other cases.
fc.configureGlobal({ seed: 20261202 });
