/** Roles a lab member can hold, strongest first (the API contract owns the list). */
export { LAB_ROLES, type LabRole } from '../../../shared/api/common';
