import { SignInScreen } from '@/components/auth/SignInScreen';

export default SignInScreen;
