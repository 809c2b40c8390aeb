import { PeopleScreen } from '@/components/people/PeopleScreen';

export default PeopleScreen;
