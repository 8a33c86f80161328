// The synthetic generator moved to the domain (the demo seed and the benchmarks use it too).
export * from '../../../src/lib/domain/lyo/synthetic';
