export { BaseModel } from './BaseModel';
export { Company } from './Company';
export { User } from './User';
export { Membership } from './Membership';
export { PasswordResetToken } from './PasswordResetToken';
export { AuditEntry } from './AuditEntry';
export { CalculationRun } from './CalculationRun';
