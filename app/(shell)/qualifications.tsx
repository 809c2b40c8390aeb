import { QualificationsScreen } from '@/components/qualifications/QualificationsScreen';

export default QualificationsScreen;
