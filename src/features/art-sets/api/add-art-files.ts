import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ArtSetDetail } from '../../runs/api/types';
import { artSetsKey } from './get-art-sets';
import { postMultipart } from './xhr-upload';

/** Adds images, or replaces those with the same name: the art set gets a new revision. */
export async function addArtFiles(workspaceId: string, artSetId: string, files: File[], onProgress?: (share: number) => void) {
  const form = new FormData();
  for (const file of files) form.append('files', file);
  const res = await postMultipart<{ artSet: ArtSetDetail }>(`/workspaces/${workspaceId}/art-sets/${artSetId}/files`, form, onProgress);
  return res.body.artSet;
}

export function useAddArtFiles(workspaceId: string, artSetId: string, onProgress: (share: number) => void) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (files: File[]) => addArtFiles(workspaceId, artSetId, files, onProgress),
    onSettled: () => queryClient.invalidateQueries({ queryKey: artSetsKey(workspaceId) }),
  });
}
