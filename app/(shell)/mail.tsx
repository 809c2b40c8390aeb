import { MailLogScreen } from '@/components/mail/MailLogScreen';

export default MailLogScreen;
