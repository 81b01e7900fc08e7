import { signInWithPassword, signInWithToken, type Signed } from '../api/client.ts';
import { cautionsBar } from './cautions.ts';
import { errorText, h, onSubmit, setStatus } from './dom.ts';

/**
 * Sign-in: email and password (a login session) or, on servers without accounts and for
 * operators' scripts, a tenant admin token. The token is kept only in this tab's session storage.
 */
export function loginScreen(onSignedIn: (signed: Signed) => void): HTMLElement {
  const status = h('div', { class: 'status', role: 'status' });
  const email = h('input', { id: 'login-email', type: 'email', autocomplete: 'username', required: true }) as HTMLInputElement;
  const password = h('input', { id: 'login-password', type: 'password', autocomplete: 'current-password', required: true }) as HTMLInputElement;
  const token = h('input', { id: 'login-token', type: 'password', autocomplete: 'off', placeholder: 'nva_…', required: true }) as HTMLInputElement;

  const passwordForm = h(
    'form',
    { 'aria-label': 'Sign in with email and password' },
    h('label', { for: 'login-email' }, 'Email', email),
    h('label', { for: 'login-password' }, 'Password', password),
    h('button', { type: 'submit', class: 'primary' }, 'Sign in'),
  );
  onSubmit(passwordForm, () => attempt(() => signInWithPassword(email.value, password.value)));
  const tokenForm = h(
    'form',
    { 'aria-label': 'Sign in with an admin token' },
    h('label', { for: 'login-token' }, 'Admin token', token),
    h('button', { type: 'submit' }, 'Sign in with token'),
  );
  onSubmit(tokenForm, () =>
    attempt(async () => {
      const signed = await signInWithToken(token.value);
      sessionStorage.setItem('nearveil.token', token.value.trim());
      return signed;
    }),
  );

  async function attempt(how: () => Promise<Signed>): Promise<void> {
    setStatus(status, 'Signing in…');
    try {
      onSignedIn(await how());
    } catch (err) {
      setStatus(status, errorText(err), 'bad');
    }
  }

  return h(
    'div',
    {},
    h('header', { class: 'top' }, h('span', { class: 'brand' }, 'nearveil console')),
    cautionsBar(),
    h(
      'main',
      { class: 'login' },
      h('h1', {}, 'Sign in'),
      h('div', { class: 'panel' }, passwordForm),
      h('div', { class: 'panel' }, h('h2', {}, 'Or with an admin token'), tokenForm),
      status,
    ),
  );
}
