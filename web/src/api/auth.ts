import type { LoginRequest, MeResponse } from '@shared/auth';
import { http } from './http';

export const authApi = {
  me: () => http.get<MeResponse>('/api/auth/me'),
  login: (body: LoginRequest) => http.post<MeResponse>('/api/auth/login', body),
  logout: () => http.post<void>('/api/auth/logout'),
};
