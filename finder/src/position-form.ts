import { checkCoordinates, type Point } from './coordinates.ts';
import { el } from './dom.ts';

export interface PositionForm {
  section: HTMLElement;
  /** The position button, for focus after a refusal elsewhere. */
  useButton: HTMLButtonElement;
  /** Moves focus to the latitude field, after the browser gave no position. */
  focusTyping(): void;
}

/**
 * "Your position": a button that asks the browser (only when pressed) and a form for typed
 * decimal degrees, each field with its label, hint and error message tied by aria-describedby.
 * The form has no action: it never submits anywhere, the script reads it.
 */
export function positionForm(handlers: { useDevice(): void; useTyped(point: Point): void }): PositionForm {
  const useButton = el('button', { type: 'button', class: 'primary', id: 'use-position' }, 'Use my current position');
  useButton.addEventListener('click', () => handlers.useDevice());

  const lat = field('lat', 'Latitude', 'Decimal degrees from -90 (south) to 90 (north), such as -75.93. You can also paste "latitude, longitude" here.');
  const lon = field('lon', 'Longitude', 'Decimal degrees from -180 (west) to 180 (east), such as 60.52.');
  const submit = el('button', { type: 'submit' }, 'Search these coordinates');
  const form = el('form', { id: 'typed-position', novalidate: true, 'aria-labelledby': 'typed-heading' }, el('h3', { id: 'typed-heading' }, 'Or type coordinates'), lat.wrap, lon.wrap, submit);
  form.addEventListener('submit', (event) => {
    event.preventDefault();
    const checked = checkCoordinates(lat.input.value, lon.input.value);
    lat.show(checked.ok ? undefined : checked.latError);
    lon.show(checked.ok ? undefined : checked.lonError);
    if (!checked.ok) {
      (checked.latError ? lat.input : lon.input).focus();
      return;
    }
    if (checked.splitLon !== undefined) {
      // A pasted pair: put each number in its own field, so what is searched is what is shown.
      lat.input.value = String(checked.point.lat);
      lon.input.value = checked.splitLon;
    }
    handlers.useTyped(checked.point);
  });

  const section = el(
    'section',
    { class: 'finder-card position', 'aria-labelledby': 'position-heading' },
    el('h2', { id: 'position-heading' }, 'Your position'),
    el('p', {}, 'Your browser asks first, and nothing is sent until the search is encrypted on this device.'),
    useButton,
    form,
  );
  return { section, useButton, focusTyping: () => lat.input.focus() };
}

function field(id: string, labelText: string, hintText: string) {
  const hintId = `${id}-hint`;
  const errorId = `${id}-error`;
  // No inputmode=decimal: some phone keypads for it have no minus sign, needed south and west.
  const input = el('input', { id, name: id, type: 'text', autocomplete: 'off', spellcheck: 'false', 'aria-describedby': hintId });
  const error = el('p', { id: errorId, class: 'field-error', hidden: true });
  const wrap = el('div', { class: 'field' }, el('label', { for: id }, labelText), el('p', { id: hintId, class: 'hint' }, hintText), input, error);
  return {
    wrap,
    input,
    show(message: string | undefined) {
      error.textContent = message ?? '';
      error.hidden = message === undefined;
      if (message === undefined) {
        input.removeAttribute('aria-invalid');
        input.setAttribute('aria-describedby', hintId);
      } else {
        input.setAttribute('aria-invalid', 'true');
        input.setAttribute('aria-describedby', `${errorId} ${hintId}`);
      }
    },
  };
}
