/**
 * What the recipe's validation (recipe.ts) and the planner share, in a module of its own
 * without the schema library: a sweep's worker threads plan and solve recipes the main
 * thread has already validated, and load neither the library nor the schemas.
 */
export class RecipeError extends Error {
  constructor(readonly field: string, readonly detail: string) {
    super(`${field}: ${detail}`);
    this.name = 'RecipeError';
  }
}

export const DIFFUSION_MODELS = ['intrinsic', 'charged-defect'] as const;
