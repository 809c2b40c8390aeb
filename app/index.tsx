import { StartRedirect } from '@/components/auth/StartRedirect';

export default StartRedirect;
