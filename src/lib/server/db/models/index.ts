export { User } from './user';
export { Session } from './session';
export { Program } from './program';
export { Membership } from './membership';
export { Invitation } from './invitation';
export { ParameterSet, type ParameterKind } from './parameter-set';
