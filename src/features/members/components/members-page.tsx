import { useState, type FormEvent } from 'react';
import { useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel, RoleBadge, SelectField, TextField } from '../../../components/ui';
import { useSession } from '../../auth/api/get-session';
import { useWorkspace } from '../../workspaces/api/get-workspace';
import type { Role } from '../../../../server/roles';
import { useCancelInvite } from '../api/cancel-invite';
import { useChangeRole } from '../api/change-role';
import { useCreateInvite } from '../api/create-invite';
import { useInvites } from '../api/get-invites';
import { useMembers } from '../api/get-members';
import { useRemoveMember } from '../api/remove-member';

const ROLE_CHOICES: { value: Role; label: string }[] = [
  { value: 'helper', label: 'Helper — sees runs, downloads bundles' },
  { value: 'maker', label: 'Maker — recipes, art sets, runs' },
  { value: 'owner', label: 'Owner — also members and settings' },
];

export function MembersPage() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  const members = useMembers(workspaceId);
  const session = useSession();
  const isOwner = workspace.data?.role === 'owner';
  const changeRole = useChangeRole(workspaceId);
  const remove = useRemoveMember(workspaceId);

  return (
    <>
      <PageHeader eyebrow={workspace.data?.name} title="Members" />
      <div className="grid items-start gap-8 xl:grid-cols-[2fr_1fr]">
        <Panel title="People in this workspace">
          {members.isPending ? (
            <Loading what="members" />
          ) : (
            <table className="w-full text-left text-sm">
              <thead className="text-ink-soft">
                <tr>
                  <th className="pb-2 font-medium">Name</th>
                  <th className="pb-2 font-medium">E-mail</th>
                  <th className="pb-2 font-medium">Role</th>
                  {isOwner && <th className="pb-2 font-medium sr-only">Actions</th>}
                </tr>
              </thead>
              <tbody>
                {members.data?.map((m) => (
                  <tr key={m.userId} className="border-t border-line/70">
                    <td className="py-3 font-medium">
                      {m.name}
                      {m.userId === session.data?.user?.id && <span className="ml-2 text-xs text-ink-soft">(you)</span>}
                    </td>
                    <td className="py-3 font-mono text-xs">{m.email}</td>
                    <td className="py-3">
                      {isOwner ? (
                        <select
                          aria-label={`Role of ${m.name}`}
                          value={m.role}
                          onChange={(e) => changeRole.mutate({ userId: m.userId, role: e.target.value as Role })}
                          className="rounded border border-line bg-white px-2 py-1"
                        >
                          <option value="owner">owner</option>
                          <option value="maker">maker</option>
                          <option value="helper">helper</option>
                        </select>
                      ) : (
                        <RoleBadge role={m.role} />
                      )}
                    </td>
                    {isOwner && (
                      <td className="py-3 text-right">
                        <Button
                          tone="danger"
                          className="px-3 py-1"
                          aria-label={`Remove ${m.name}`}
                          onClick={() => {
                            if (window.confirm(`Remove ${m.name} from this workspace?`)) remove.mutate(m.userId);
                          }}
                        >
                          Remove
                        </Button>
                      </td>
                    )}
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          <div className="mt-4 space-y-2">
            <ErrorNote error={changeRole.error} />
            <ErrorNote error={remove.error} />
          </div>
        </Panel>
        {isOwner && (
          <div className="space-y-8">
            <InviteForm workspaceId={workspaceId} />
            <PendingInvites workspaceId={workspaceId} />
          </div>
        )}
      </div>
      <RolesPanel />
    </>
  );
}

function InviteForm({ workspaceId }: { workspaceId: string }) {
  const create = useCreateInvite(workspaceId);
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<Role>('helper');
  const [sentTo, setSentTo] = useState<string | null>(null);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    create.mutate(
      { email, role },
      {
        onSuccess: () => {
          setSentTo(email);
          setEmail('');
        },
      },
    );
  };
  return (
    <Panel title="Invite by e-mail">
      <form onSubmit={submit} className="space-y-4">
        <TextField label="E-mail address" type="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
        <SelectField label="Role" value={role} onChange={(e) => setRole(e.target.value as Role)}>
          {ROLE_CHOICES.map((r) => (
            <option key={r.value} value={r.value}>
              {r.label}
            </option>
          ))}
        </SelectField>
        <ErrorNote error={create.error} />
        {sentTo && (
          <p role="status" className="rounded-md bg-proof-soft px-3 py-2 text-sm text-proof">
            Invitation sent to {sentTo}.
          </p>
        )}
        <Button type="submit" disabled={create.isPending}>
          {create.isPending ? 'Sending…' : 'Send invitation'}
        </Button>
      </form>
    </Panel>
  );
}

function PendingInvites({ workspaceId }: { workspaceId: string }) {
  const invites = useInvites(workspaceId, true);
  const cancel = useCancelInvite(workspaceId);
  return (
    <Panel title="Pending invitations">
      {invites.isPending ? (
        <Loading what="invitations" />
      ) : invites.data?.length ? (
        <ul className="space-y-3 text-sm">
          {invites.data.map((i) => (
            <li key={i.id} className="flex items-center justify-between gap-3">
              <span>
                <span className="font-mono text-xs">{i.email}</span> <RoleBadge role={i.role} />
                <span className="block text-xs text-ink-soft">until {new Date(i.expiresAt).toLocaleDateString()}</span>
              </span>
              <Button tone="quiet" className="px-3 py-1" onClick={() => cancel.mutate(i.id)} aria-label={`Withdraw invitation for ${i.email}`}>
                Withdraw
              </Button>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-soft">None waiting.</p>
      )}
      <ErrorNote error={cancel.error} />
    </Panel>
  );
}

// What each role may do, as the server enforces it (server/middleware/auth.ts and each route's roles).
const ROLE_RIGHTS: Array<{ what: string; owner: boolean; maker: boolean; helper: boolean }> = [
  { what: 'See runs, cards and proofs; download outputs and bundles', owner: true, maker: true, helper: true },
  { what: 'See recipes, art sets and price sheets; plan a print', owner: true, maker: true, helper: true },
  { what: 'Make and edit recipes, upload art sets', owner: true, maker: true, helper: false },
  { what: 'Start and cancel runs, make share links', owner: true, maker: true, helper: false },
  { what: 'Enter and edit price sheets', owner: true, maker: true, helper: false },
  { what: 'Invite people, change roles, remove members', owner: true, maker: false, helper: false },
];

function RolesPanel() {
  return (
    <Panel title="What each role may do" className="mt-8 max-w-3xl">
      <table className="w-full text-left text-sm" data-testid="role-rights">
        <caption className="sr-only">What owners, makers and helpers may do</caption>
        <thead className="text-ink-soft">
          <tr>
            <th className="pb-2 font-medium">
              <span className="sr-only">Action</span>
            </th>
            {(['owner', 'maker', 'helper'] as const).map((r) => (
              <th key={r} scope="col" className="w-24 pb-2 text-center font-medium">
                <RoleBadge role={r} />
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {ROLE_RIGHTS.map((row) => (
            <tr key={row.what} className="border-t border-line/70">
              <th scope="row" className="py-2 pr-2 font-normal">
                {row.what}
              </th>
              {(['owner', 'maker', 'helper'] as const).map((r) => (
                <td key={r} className="py-2 text-center">
                  {row[r] ? <span aria-label="yes" className="font-semibold text-proof">✓</span> : <span aria-label="no" className="text-ink-soft/60">—</span>}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </Panel>
  );
}
