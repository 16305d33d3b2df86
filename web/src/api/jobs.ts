import type {
  JobAssign,
  JobCreate,
  JobDetail,
  JobListQuery,
  JobNote,
  JobStatusChange,
  JobSummary,
  JobUpdate,
  Technician,
} from '@shared/jobs';
import { http } from './http';
import { qs } from './query';

export type JobListFilter = Partial<Pick<JobListQuery, 'status' | 'technicianId' | 'customerId' | 'q' | 'sort' | 'dir'>>;

export const jobsApi = {
  list: (filter: JobListFilter = {}) => http.get<JobSummary[]>(`/api/jobs${qs(filter)}`),
  get: (id: number) => http.get<JobDetail>(`/api/jobs/${id}`),
  create: (body: Partial<JobCreate> & Pick<JobCreate, 'unitId' | 'reportedFault'>) => http.post<JobDetail>('/api/jobs', body),
  update: (id: number, body: JobUpdate) => http.patch<JobDetail>(`/api/jobs/${id}`, body),
  move: (id: number, body: Partial<JobStatusChange> & Pick<JobStatusChange, 'to'>) => http.post<JobDetail>(`/api/jobs/${id}/status`, body),
  setFaultFound: (id: number, text: string) => http.put<JobDetail>(`/api/jobs/${id}/fault-found`, { text }),
  addNote: (id: number, body: Partial<JobNote> & Pick<JobNote, 'text'>) => http.post<JobDetail>(`/api/jobs/${id}/notes`, body),
  assign: (id: number, body: JobAssign) => http.put<JobDetail>(`/api/jobs/${id}/technician`, body),
  technicians: () => http.get<Technician[]>('/api/technicians'),
};
