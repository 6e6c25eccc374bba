import type { Problem } from './load.ts';

/** The messages bar: one line per problem, naming the file and saying why; hidden when there are none. */
export function showProblems(el: HTMLElement, problems: Problem[]): void {
  el.replaceChildren();
  el.hidden = problems.length === 0;
  for (const p of problems) {
    const line = document.createElement('div');
    line.className = 'problem';
    const file = document.createElement('code');
    file.textContent = p.file;
    line.append(file, `: ${p.reason}`);
    el.append(line);
  }
}
