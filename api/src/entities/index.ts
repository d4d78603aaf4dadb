import { Assay, Comment, Measurement, ProjectTarget, Result, Run, RunFile, Target } from './assay.entity.js';
import { AccountToken } from './account-token.entity.js';
import { AuditEvent } from './audit-event.entity.js';
import { Batch, Compound, RegistryCounter } from './compound.entity.js';
import { ImportJob } from './import-job.entity.js';
import { LigandCall } from './ligand-call.entity.js';
import { Project, Series } from './project.entity.js';
import { SavedView } from './saved-view.entity.js';
import { Decision } from './decision.entity.js';
import { DataVersion } from './data-version.entity.js';
import { User } from './user.entity.js';

export { AccountToken, Assay, Comment, Measurement, ProjectTarget, Result, Run, RunFile, Target, AuditEvent, Batch, Compound, ImportJob, LigandCall, Project, RegistryCounter, SavedView, Decision, DataVersion, Series, User };
export const entities = [User, AccountToken, AuditEvent, Project, Series, Compound, Batch, RegistryCounter, ImportJob, Target, ProjectTarget, Assay, Run, RunFile, Measurement, Result, Comment, SavedView, Decision, LigandCall, DataVersion];
