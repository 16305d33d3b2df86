import type { JobSummary } from '@shared/jobs';
import { http } from './http';

export const jobsApi = {
  list: () => http.get<JobSummary[]>('/api/jobs'),
};
