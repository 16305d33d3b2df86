import { defineStore } from 'pinia';
import { computed, ref, readonly } from 'vue';
import type { LoginRequest, SessionUser } from '@shared/auth';
import type { Role } from '@shared/roles';
import { authApi } from '@/api/auth';
import { ApiRequestError, setCsrfToken } from '@/api/http';

export const useSessionStore = defineStore('session', () => {
  const user = ref<SessionUser | null>(null);
  const loaded = ref(false);

  async function load(): Promise<void> {
    try {
      const me = await authApi.me();
      user.value = me.user;
      setCsrfToken(me.csrfToken);
    } catch (err) {
      if (!(err instanceof ApiRequestError && err.status === 401)) throw err;
      user.value = null;
    } finally {
      loaded.value = true;
    }
  }

  async function signIn(credentials: LoginRequest): Promise<SessionUser> {
    const me = await authApi.login(credentials);
    setCsrfToken(me.csrfToken);
    user.value = me.user;
    loaded.value = true;
    return me.user;
  }

  async function signOut(): Promise<void> {
    await authApi.logout();
    setCsrfToken(null);
    user.value = null;
  }

  const role = computed<Role | null>(() => user.value?.role ?? null);
  const hasRole = (...roles: Role[]) => role.value !== null && roles.includes(role.value);

  return { user: readonly(user), loaded: readonly(loaded), role, hasRole, load, signIn, signOut };
});
