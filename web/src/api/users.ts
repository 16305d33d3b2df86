import type { AuditRecord, PasswordChange, ShopUser, SignInRecord, UserCreate, UserUpdate } from '@shared/users';
import { http } from './http';

export const usersApi = {
  list: () => http.get<ShopUser[]>('/api/users'),
  create: (body: UserCreate) => http.post<ShopUser>('/api/users', body),
  update: (id: number, body: UserUpdate) => http.patch<ShopUser>(`/api/users/${id}`, body),
  resetPassword: (id: number, newPassword: string) => http.post<void>(`/api/users/${id}/password`, { newPassword }),
  changeOwnPassword: (body: PasswordChange) => http.post<void>('/api/account/password', body),
  signIns: () => http.get<SignInRecord[]>('/api/audit/sign-ins'),
  audit: () => http.get<AuditRecord[]>('/api/audit/events'),
};
