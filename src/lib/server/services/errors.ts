// The services' refusals live in ../errors.ts, where db/ can use them too; re-exported here
// for the many routes and services that import them from services/errors.
export {
	ServiceError,
	attempt,
	forbidden,
	isDuplicateKey,
	notFound,
	type Attempt
} from '../errors';
