/**
 * The engines' progress stage names in the product's words, one table for the run page (through the
 * worker) and the command line. 'done' is reported once the result is built and being certified.
 */
const STAGE_WORDS: Record<string, string> = {
  relax: 'toppling',
  level: 'toppling',
  grow: 'growing the domain',
  done: 'checking the result',
};

export const stageWords = (stage: string): string => STAGE_WORDS[stage] ?? stage;
