/** The seeded network generator: block-model specs, their factor models, and sampled correlation matrices. */
export {
  blockMeans,
  factorModel,
  populationCorrelation,
  withPlantedEffect,
  type BlockModelSpec,
  type FactorModel,
  type Isolation,
  type Overlap,
  type PlantedEffect,
} from './block-model.ts';
export { gaussianSource, ln } from './gaussian.ts';
export { pearsonCorrelation, sampleCorrelation, sampleTimeSeries, type SeriesOptions } from './sample.ts';
