/** Roles a lab member can hold, strongest first. */
export const LAB_ROLES = ['owner', 'analyst', 'reviewer', 'viewer'] as const;
export type LabRole = (typeof LAB_ROLES)[number];
