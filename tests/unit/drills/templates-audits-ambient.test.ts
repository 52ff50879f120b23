/** Every template of these areas over 1,000 seeds (the checks are in template-checks.ts). */
import { describeTemplates } from './template-checks';

describeTemplates(['monitor-audits', 'ambient-conversions']);
