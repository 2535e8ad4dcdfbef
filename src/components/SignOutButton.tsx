import { useState } from 'react';

/** Ends this session on the server, then returns to the Gallery. */
export default function SignOutButton() {
  const [busy, setBusy] = useState(false);
  async function signOut() {
    setBusy(true);
    await fetch('/api/auth/sign-out', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' });
    window.location.assign('/');
  }
  return (
    <button type="button" className="btn-quiet" onClick={signOut} disabled={busy} data-testid="sign-out">
      {busy ? 'Signing out…' : 'Sign out'}
    </button>
  );
}
