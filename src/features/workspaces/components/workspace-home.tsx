import { Link, useParams } from 'react-router-dom';
import { Loading, PageHeader, Panel, RoleBadge } from '../../../components/ui';
import { useWorkspace } from '../api/get-workspace';

const steps = [
  { to: 'recipes', title: 'Recipes', text: 'Trim, bleed, DPI, fill, turn and naming, saved and versioned.' },
  { to: 'art-sets', title: 'Art sets', text: 'Upload a zip of card images, with a manifest and backs if you have them.' },
  { to: 'runs', title: 'Runs', text: 'A recipe applied to an art set: singles, a combined PDF, sheets and a proof.' },
];

const roleText = {
  owner: 'You manage members and settings, and can do everything makers do.',
  maker: 'You define recipes, upload art sets and start runs.',
  helper: 'You can see runs and download finished bundles.',
};

export function WorkspaceHome() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  if (!workspace.data) return <Loading what="workspace" />;
  const ws = workspace.data;
  return (
    <>
      <PageHeader eyebrow="Workspace" title={ws.name}>
        <p className="flex items-center gap-2 text-sm text-ink-soft">
          Your role <RoleBadge role={ws.role} />
        </p>
      </PageHeader>
      <p className="mb-8 max-w-2xl text-ink-soft">{roleText[ws.role]}</p>
      <div className="grid gap-6 md:grid-cols-3">
        {steps.map((step, i) => (
          <Link key={step.to} to={step.to} className="group block rounded-sm focus-visible:outline-2">
            <Panel className="h-full transition-transform group-hover:-translate-y-0.5">
              <p className="font-mono text-xs text-cut">0{i + 1}</p>
              <h2 className="mt-2 text-lg font-semibold">{step.title}</h2>
              <p className="mt-2 text-sm text-ink-soft">{step.text}</p>
            </Panel>
          </Link>
        ))}
      </div>
    </>
  );
}
