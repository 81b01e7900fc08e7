import { canAdminister, resumeSession, signInWithToken, signOut, type Signed } from './api/client.ts';
import { nearveilAdmin } from './api/nearveil.ts';
import { costScreen } from './cost/cost-screen.ts';
import { keysScreen } from './keys/keys-screen.ts';
import { mapScreen } from './map/map-screen.ts';
import { tenantsScreen } from './operator/tenants-screen.ts';
import { sheetScreen } from './sheet/sheet-screen.ts';
import { teamScreen } from './team/team-screen.ts';
import { cautionsBar } from './ui/cautions.ts';
import type { ConsoleContext, Screen, ScreenName } from './ui/context.ts';
import { h } from './ui/dom.ts';
import { loginScreen } from './ui/login-screen.ts';
import { passwordDialog } from './ui/password-dialog.ts';
import { versionsScreen } from './versions/versions-screen.ts';

const root = document.getElementById('app')!;

const TITLES: Record<ScreenName, string> = {
  sheet: 'Site table',
  versions: 'Versions',
  map: 'Map',
  cost: 'Cost',
  keys: 'Keys & usage',
  team: 'Team & activity',
};

function showLogin(): void {
  root.replaceChildren(loginScreen((signed) => showConsole(signed)));
  (document.getElementById('login-email') as HTMLInputElement | null)?.focus();
}

function signOutButton(signed: Signed): HTMLButtonElement {
  const leave = async () => {
    sessionStorage.removeItem('nearveil.token');
    await signOut(signed);
    showLogin();
  };
  return h('button', { type: 'button', onclick: () => void leave() }, 'Sign out');
}

/** "Password…": every signed-in person changes their own password (an admin token has none). */
function passwordButton(dialog: { open(): void }): HTMLButtonElement {
  return h('button', { type: 'button', onclick: () => dialog.open() }, 'Password…');
}

/** The operator belongs to no tenant: its console is the tenants, their tariffs and statements. */
function showOperator(signed: Signed): void {
  const api = nearveilAdmin(signed.client);
  const password = passwordDialog(api);
  root.replaceChildren(
    h(
      'header',
      { class: 'top' },
      h('span', { class: 'brand' }, 'nearveil console'),
      h('span', { class: 'who' }, `${signed.label} · operator `, passwordButton(password), ' ', signOutButton(signed)),
    ),
    cautionsBar(),
    h('main', { id: 'main' }, h('h1', { class: 'sr-only' }, 'Tenants and tariffs'), tenantsScreen(api)),
    password.element,
  );
}

function showConsole(signed: Signed): void {
  if (signed.user?.role === 'operator') return showOperator(signed);
  const screens = new Map<ScreenName, Screen>();
  const main = h('main', { id: 'main' });
  const navButtons = new Map<ScreenName, HTMLButtonElement>();
  const ctx: ConsoleContext = {
    signed,
    api: nearveilAdmin(signed.client),
    dataset: sessionStorage.getItem('nearveil.dataset'),
    setDataset(slug) {
      ctx.dataset = slug;
      if (slug) sessionStorage.setItem('nearveil.dataset', slug);
    },
    go,
  };
  const sheet = sheetScreen(ctx);
  screens.set('sheet', sheet);
  screens.set('versions', versionsScreen(ctx, (slug, version) => {
    go('sheet');
    void sheet.openVersion(slug, version);
  }));
  screens.set('map', mapScreen(ctx));
  screens.set('cost', costScreen(ctx));
  screens.set('keys', keysScreen(ctx));
  screens.set('team', teamScreen(ctx));

  function go(name: ScreenName): void {
    for (const [n, button] of navButtons) button.setAttribute('aria-current', n === name ? 'page' : 'false');
    const screen = screens.get(name)!;
    main.replaceChildren(h('h1', { class: 'sr-only' }, titles[name]), screen.element);
    location.hash = name;
    screen.show();
  }

  const nav = h('nav', { 'aria-label': 'Console sections' });
  // Editors have no keys to manage: their tab is the usage it shows them.
  const titles: Record<ScreenName, string> = canAdminister(signed) ? TITLES : { ...TITLES, keys: 'Usage' };
  for (const name of Object.keys(TITLES) as ScreenName[]) {
    const button = h('button', { type: 'button', onclick: () => go(name) }, titles[name]) as HTMLButtonElement;
    navButtons.set(name, button);
    nav.append(button);
  }
  const password = passwordDialog(ctx.api);
  const who = h(
    'span',
    { class: 'who' },
    `${signed.label}${signed.user?.tenant ? ` · ${signed.user.tenant.name}` : ''}${signed.user ? ` · ${signed.user.role.replace('_', ' ')}` : ''} `,
    signed.user ? passwordButton(password) : null,
    ' ',
    signOutButton(signed),
  );
  root.replaceChildren(h('header', { class: 'top' }, h('span', { class: 'brand' }, 'nearveil console'), nav, who), cautionsBar(), main, password.element);
  const wanted = location.hash.slice(1) as ScreenName;
  go(wanted in TITLES ? wanted : 'sheet');
}

async function boot(): Promise<void> {
  const session = await resumeSession();
  if (session) return showConsole(session);
  const token = sessionStorage.getItem('nearveil.token');
  if (token) {
    try {
      return showConsole(await signInWithToken(token));
    } catch {
      sessionStorage.removeItem('nearveil.token');
    }
  }
  showLogin();
}

void boot();
