import { useState } from 'react';
import { QueryClient, QueryClientProvider, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { ROLES, type Role } from '~/lib/roles';
import type { PersonChange, PersonRow } from '~/lib/people-schemas';

const ROLE_LABEL: Record<Role, string> = { buyer: 'Buyer', photographer: 'Photographer', admin: 'Admin' };

async function json<T>(response: Response): Promise<T> {
  const body = await response.json().catch(() => null);
  if (!response.ok) throw new Error(body?.error?.message ?? `The shop answered ${response.status}.`);
  return body as T;
}

export default function PeopleTable({ selfId }: { selfId: string }) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { refetchOnWindowFocus: false } } }));
  return (
    <QueryClientProvider client={client}>
      <People selfId={selfId} />
    </QueryClientProvider>
  );
}

function People({ selfId }: { selfId: string }) {
  const queryClient = useQueryClient();
  const [filter, setFilter] = useState('');
  const people = useQuery({ queryKey: ['people'], queryFn: async () => (await json<{ people: PersonRow[] }>(await fetch('/api/dispatch/people'))).people });
  const change = useMutation({
    mutationFn: async ({ id, change }: { id: string; change: PersonChange }) =>
      json<{ person: PersonRow }>(await fetch(`/api/dispatch/people/${encodeURIComponent(id)}`, {
        method: 'PATCH', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(change),
      })),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: ['people'] }),
  });

  if (people.isPending) return <p className="text-ink-soft">Loading accounts…</p>;
  if (people.isError) return <p role="alert">{people.error.message}</p>;
  const q = filter.trim().toLowerCase();
  const rows = people.data.filter((p) => !q || p.email.toLowerCase().includes(q) || p.name.toLowerCase().includes(q));

  return (
    <div>
      <label className="mb-4 block max-w-sm">
        <span className="eyebrow mb-1 block">Find</span>
        <input className="field" type="search" value={filter} onChange={(e) => setFilter(e.target.value)} placeholder="name or e-mail" />
      </label>
      {change.isError && <p role="alert" className="mb-3 rounded-sm border border-ember px-3 py-2 text-sm">{change.error.message}</p>}
      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm">
          <thead className="border-b border-rule text-xs uppercase tracking-wide text-ink-soft">
            <tr><th className="py-2 pr-4">Name</th><th className="pr-4">E-mail</th><th className="pr-4">Role</th><th className="pr-4">Status</th><th className="pr-4">Sessions</th><th /></tr>
          </thead>
          <tbody className="divide-y divide-rule">
            {rows.map((p) => (
              <tr key={p.id} data-testid={`person-${p.email}`}>
                <td className="py-2 pr-4"><a href={`/dispatch/people/${encodeURIComponent(p.id)}`}>{p.name}</a>{p.id === selfId && <span className="ml-2 text-xs text-ink-soft">(you)</span>}</td>
                <td className="pr-4">{p.email}{!p.emailVerified && <span className="ml-2 text-xs text-ink-soft">unconfirmed</span>}</td>
                <td className="pr-4">
                  <select
                    className="field w-auto py-1"
                    aria-label={`Role of ${p.email}`}
                    value={p.role}
                    disabled={change.isPending || p.id === selfId}
                    onChange={(e) => change.mutate({ id: p.id, change: { role: e.target.value as Role } })}
                  >
                    {ROLES.map((r) => <option key={r} value={r}>{ROLE_LABEL[r]}</option>)}
                  </select>
                </td>
                <td className="pr-4">{p.disabled ? <span className="text-ember">Disabled</span> : 'Active'}</td>
                <td className="pr-4 tabular-nums">{p.activeSessions}</td>
                <td className="py-2 text-right">
                  {p.id !== selfId && (
                    <button
                      type="button"
                      className="btn-quiet py-1"
                      disabled={change.isPending}
                      onClick={() => change.mutate({ id: p.id, change: { disabled: !p.disabled } })}
                    >
                      {p.disabled ? 'Enable' : 'Disable'}
                    </button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p className="mt-4 text-xs text-ink-soft">Disabling an account signs it out everywhere at once; it can no longer sign in until enabled again.</p>
    </div>
  );
}
