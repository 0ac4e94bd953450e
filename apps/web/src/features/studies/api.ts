import { studySchema, type CreateStudy } from '@evenhand/entities';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { studyKeys } from '@/lib/study';

export function useStartStudy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateStudy) => apiRequest('/studies', { method: 'POST', body: input, schema: studySchema }),
    onSuccess: (study) => {
      queryClient.setQueryData(studyKeys.detail(study.id), study);
      return queryClient.invalidateQueries({ queryKey: studyKeys.lists() });
    },
  });
}
