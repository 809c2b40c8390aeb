import { NotFoundScreen } from '@/components/common/NotFoundScreen';

export default NotFoundScreen;
