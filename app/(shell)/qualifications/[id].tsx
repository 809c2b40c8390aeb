import { QualificationScreen } from '@/components/qualifications/QualificationScreen';

export default QualificationScreen;
