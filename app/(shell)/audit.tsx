import { AuditScreen } from '@/components/audit/AuditScreen';

export default AuditScreen;
