import { el } from './dom.ts';

/**
 * The one polite live region: what the page is doing, how many sites it found, or what went
 * wrong. A problem is styled apart, and announced the same polite way (it follows a press).
 */
export function statusLine() {
  const element = el('p', { id: 'status', class: 'status', role: 'status', 'aria-live': 'polite' });
  return {
    element,
    say(text: string) {
      element.classList.remove('status-problem');
      element.textContent = text;
    },
    problem(text: string) {
      element.classList.add('status-problem');
      element.textContent = text;
    },
  };
}
