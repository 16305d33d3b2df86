import type { Role } from '@shared/roles';

export interface NavItem {
  label: string;
  icon: string;
  to: string;
  roles: Role[];
}

/** What each role finds in the side rail; the server checks the same roles on every route. */
export const NAV_ITEMS: NavItem[] = [
  { label: 'Jobs', icon: 'pi pi-wrench', to: '/jobs', roles: ['owner', 'technician', 'front_desk'] },
  { label: 'My repairs', icon: 'pi pi-box', to: '/my/repairs', roles: ['customer'] },
  { label: 'Customers', icon: 'pi pi-users', to: '/customers', roles: ['owner', 'front_desk', 'technician'] },
  { label: 'Spec sheets', icon: 'pi pi-book', to: '/spec-sheets', roles: ['owner', 'technician', 'front_desk'] },
  { label: 'Calibration', icon: 'pi pi-sliders-h', to: '/calibrations', roles: ['owner', 'technician'] },
  { label: 'Invoices', icon: 'pi pi-receipt', to: '/invoices', roles: ['owner', 'front_desk'] },
  { label: 'Outbox', icon: 'pi pi-envelope', to: '/outbox', roles: ['owner', 'front_desk'] },
  { label: 'Live bench', icon: 'pi pi-wave-pulse', to: '/live', roles: ['owner', 'technician'] },
  { label: 'Test signals', icon: 'pi pi-download', to: '/test-signals', roles: ['owner', 'technician'] },
  { label: 'People', icon: 'pi pi-id-card', to: '/people', roles: ['owner'] },
  { label: 'Settings', icon: 'pi pi-cog', to: '/settings', roles: ['owner'] },
  { label: 'My account', icon: 'pi pi-user', to: '/account', roles: ['owner', 'technician', 'front_desk', 'customer'] },
];

export const navFor = (role: Role | null) => (role ? NAV_ITEMS.filter((i) => i.roles.includes(role)) : []);
