import { useState } from 'react';

/** Asks for a new download link when the last one expired or was used up. */
export default function RenewLink({ licenceId }: { licenceId: string }) {
  const [state, setState] = useState<{ url?: string; error?: string; busy?: boolean }>({});
  async function renew() {
    setState({ busy: true });
    const response = await fetch(`/api/account/licences/${encodeURIComponent(licenceId)}/renew`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' });
    const body = await response.json().catch(() => null);
    if (response.ok && body?.link?.url) setState({ url: body.link.url });
    else setState({ error: body?.error?.message ?? `The shop answered ${response.status}.` });
  }
  if (state.url) return <a href={state.url} className="btn-primary no-underline" data-testid="download-link">Download the file</a>;
  return (
    <span>
      <button type="button" className="btn-quiet" onClick={renew} disabled={state.busy}>New download link</button>
      {state.error && <span role="alert" className="ml-2 text-sm text-ember">{state.error}</span>}
    </span>
  );
}
