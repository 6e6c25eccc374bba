/*
 * The ids of the files Edgewise reads and writes ("name/major version"), in one place for
 * the solver, the CLI and the viewer.
 */
export const RECIPE_SCHEMA_ID = 'edgewise.recipe/1';
export const REPORT_SCHEMA_ID = 'edgewise.report/1';
export const SWEEP_SCHEMA_ID = 'edgewise.sweep/1';
export const SPACING_SCHEMA_ID = 'edgewise.spacing/1';
