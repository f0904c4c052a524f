import { useWorkspace } from '../../workspaces/api/get-workspace';

/** Owners and makers write recipes, art sets, runs and share links; helpers only read and download. */
export function useCanWrite(workspaceId: string): boolean {
  const role = useWorkspace(workspaceId).data?.role;
  return role === 'owner' || role === 'maker';
}
