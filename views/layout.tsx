/** The page frame every full page renders in: header, navigation, main, footer. */
import type { Child } from 'hono/jsx';

export interface NavItem {
  href: string;
  label: string;
}

/** The navigation, in the order a bonding engineer works: what waits to bond, then where risk comes from. */
export const NAV: NavItem[] = [
  { href: '/', label: 'Overview' },
  { href: '/lots', label: 'Lots' },
  { href: '/areas', label: 'Areas' },
  { href: '/line', label: 'Line' },
  { href: '/tools', label: 'Tools & cleans' },
  { href: '/calibration', label: 'Calibration' },
  { href: '/parameters', label: 'Parameters' },
  { href: '/calculators', label: 'Calculators' },
  { href: '/imports', label: 'Imports' },
];

export interface LayoutAccount {
  username: string;
  displayName: string;
  role: string;
}

export function Layout(props: {
  title: string;
  active?: string;
  children?: Child;
  version?: string;
  /** True when nobody signs in (open mode): a banner on every page says so. */
  openMode?: boolean;
  /** The signed-in account, shown with its pages and a sign-out button. */
  account?: LayoutAccount | null;
  csrfToken?: string;
}) {
  const active = props.active ?? '';
  return (
    <html lang="en">
      <head>
        <meta charset="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <title>{`${props.title} · voidcast`}</title>
        <link rel="stylesheet" href="/assets/voidcast.css" />
        <link rel="stylesheet" href="/assets/print.css" media="print" />
        <link rel="icon" href="/assets/favicon.svg" type="image/svg+xml" />
        {/* No inline script or style anywhere (Content-Security-Policy, src/web/hardening.ts): htmx
            injects no indicator style, evaluates no string, and settles no style attribute. */}
        <meta
          name="htmx-config"
          content='{"includeIndicatorStyles":false,"allowEval":false,"attributesToSettle":["class","width","height"]}'
        />
        <script src="/assets/htmx.min.js" defer></script>
        <script src="/assets/voidcast.js" defer></script>
      </head>
      <body hx-boost="true">
        <header class="vc-masthead">
          <a class="vc-brand" href="/" aria-label="voidcast overview">
            <svg class="vc-mark" viewBox="0 0 32 32" width="28" height="28" aria-hidden="true">
              <circle cx="16" cy="16" r="14" fill="none" stroke="currentColor" stroke-width="2.5" />
              <circle
                cx="16"
                cy="16"
                r="6"
                fill="none"
                stroke="currentColor"
                stroke-width="2"
                stroke-dasharray="3 2"
              />
              <circle cx="16" cy="16" r="1.8" fill="currentColor" />
            </svg>
            <span>voidcast</span>
          </a>
          <nav class="vc-nav" aria-label="Main">
            {NAV.map((n) => (
              <a
                href={n.href}
                class={isActive(n.href, active) ? 'active' : undefined}
                aria-current={isActive(n.href, active) ? 'page' : undefined}
              >
                {n.label}
              </a>
            ))}
          </nav>
          <SearchBox />
          <AccountBox {...props} active={active} />
        </header>
        {props.openMode ? (
          <p class="vc-open-banner" role="note">
            Open mode: nobody signs in, and everyone who can reach this machine's loopback address may import,
            sign off and adopt. Serve without --open to require accounts before others use it.
          </p>
        ) : null}
        <main id="main" class="vc-main">
          {props.children}
        </main>
        <footer class="vc-footer">
          <p>
            voidcast {props.version ?? ''} estimates particle and void risk. It does not replace the site's
            contamination-control and equipment-safety procedures; re-clean calls go through authorised
            recipes and qualified people.
          </p>
        </footer>
      </body>
    </html>
  );
}

/**
 * The search box on every page: a plain GET form to /search (works without script), finding a
 * wafer, pair, lot, tool or location by its id.
 */
function SearchBox() {
  return (
    <search class="vc-search-wrap">
      <form class="vc-search" method="get" action="/search" aria-label="Find by id">
        <label for="vc-search-q" class="vc-visually-hidden">
          Find a wafer, pair, lot, tool or location by its id
        </label>
        <input
          id="vc-search-q"
          type="search"
          name="q"
          placeholder="wafer, pair, lot, tool, location id"
          maxlength={120}
          autocomplete="off"
        />
        <button type="submit">Find</button>
      </form>
    </search>
  );
}

/** The account's own links (Audit, Accounts for admins, the account) and the sign-out button. */
function AccountBox(props: {
  account?: LayoutAccount | null;
  openMode?: boolean;
  csrfToken?: string;
  active: string;
}) {
  const link = (href: string, label: string) => (
    <a
      href={href}
      class={isActive(href, props.active) ? 'active' : undefined}
      aria-current={isActive(href, props.active) ? 'page' : undefined}
    >
      {label}
    </a>
  );
  if (!props.account)
    return (
      <nav class="vc-nav vc-account-nav" aria-label="Records">
        {link('/audit', 'Audit')}
      </nav>
    );
  return (
    <nav class="vc-nav vc-account-nav" aria-label="Account">
      {link('/audit', 'Audit')}
      {props.account.role === 'admin' ? link('/admin/users', 'Accounts') : null}
      {link('/account', `${props.account.displayName} (${props.account.role})`)}
      <form method="post" action="/logout" class="vc-inline-form">
        <input type="hidden" name="_csrf" value={props.csrfToken ?? ''} />
        <button type="submit" class="vc-link-button">
          Sign out
        </button>
      </form>
    </nav>
  );
}

function isActive(href: string, active: string): boolean {
  if (href === '/') return active === '/';
  return active === href || active.startsWith(`${href}/`);
}
