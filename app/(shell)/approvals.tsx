import { ApprovalsScreen } from '@/components/approvals/ApprovalsScreen';

export default ApprovalsScreen;
