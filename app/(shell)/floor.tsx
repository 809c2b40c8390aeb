import { FloorScreen } from '@/components/floor/FloorScreen';

export default FloorScreen;
