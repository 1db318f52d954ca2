import { onMounted, ref } from 'vue'
import type { ProjectSummary } from '@shared/types/api'
import { projectsApi } from '@/api'
import { useAsyncAction } from './useAsyncAction'

/** The projects the signed-in person may see, loaded on mount. */
export function useProjects() {
  const projects = ref<ProjectSummary[]>([])
  const { isLoading, error, run } = useAsyncAction(async () => {
    projects.value = await projectsApi.list()
  })
  onMounted(() => run())
  return { projects, isLoading, error, reload: run }
}
