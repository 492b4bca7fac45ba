/** One paragraph of help per view: what it shows and how to read it. */
import type { ViewName } from './session.svelte.ts';

export const VIEW_HELP: Record<ViewName, string> = {
  study:
    'Open a cohort folder: one connectivity matrix (or region time series) per scan, a participants table with groups and covariates, and optionally a node table with region labels, networks and coordinates. The quality check lists every problem by file; scans with errors are left out, never silently. Then choose the design: the effect to test, covariates, exchangeability blocks for repeated scans, and the reference level.',
  analysis:
    'Choose how matrices become distances and where the filtration stops, then run. Each scan’s persistence diagram is computed once and cached; the same settings again reuse it. Runs stay listed below: open an earlier one to see its results again; a run still going on is picked up again after a reload.',
  groups:
    'Curves show how many topological features (components, loops) are alive along the filtration, averaged per group with a bootstrap band. Distributions show one feature per scan by group, with its test from the run’s design: p-values are permutation p-values, corrected across the family (FWER) and as FDR q-values. The subject map places scans by the distance between their persistence diagrams.',
  regions:
    'Node measures say how much each region takes part in the loops (H1) or how early it joins the network (H0). Regions are ranked by the effect size of the tested design; stars mark regions significant after family-wise correction. Positions come from the node table, or a circle when there is none.',
  subject:
    'One scan in detail: the barcode and persistence diagram (each bar or point is one component or loop, from its birth to its death along the filtration), the matrix as read, and the cycle of the selected loop drawn on the regions. Select an interval in the table, the barcode or the diagram.',
  compare:
    'Two filtrations side by side: two scans, a scan against its group’s mean matrix, or two groups’ means. Diagrams and barcodes share their axes; the distance between the diagrams is the one the whole-diagram tests use; cycles are linked across the panels by the regions they pass through. A scan’s percentile rank is its position in this cohort, not a clinical norm.',
  export:
    'Write every table of the run (TSV, readable by R and pandas, NA for missing) with provenance.json: the settings, versions and a hash of every input. An existing folder is never overwritten unless you choose to replace Loopwise’s own files there. Figures are saved as SVG or PNG with the provenance inside.',
};
