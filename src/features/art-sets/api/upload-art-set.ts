import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ArtSetDetail } from '../../runs/api/types';
import { artSetsKey } from './get-art-sets';
import { postMultipart } from './xhr-upload';

export interface UploadResult {
  artSet: ArtSetDetail;
  deduplicated: boolean;
}

export async function uploadArtSet(workspaceId: string, file: File, name: string, onProgress?: (share: number) => void) {
  const form = new FormData();
  if (name.trim()) form.append('name', name.trim());
  form.append('file', file);
  const res = await postMultipart<UploadResult>(`/workspaces/${workspaceId}/art-sets`, form, onProgress);
  return res.body;
}

export function useUploadArtSet(workspaceId: string, onProgress: (share: number) => void) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { file: File; name: string }) => uploadArtSet(workspaceId, input.file, input.name, onProgress),
    onSettled: () => queryClient.invalidateQueries({ queryKey: artSetsKey(workspaceId) }),
  });
}
