// Placeholder until the mail log screens land.
import { PlaceholderScreen } from '@/components/common/PlaceholderScreen';

export default function MailRoute() {
  return (
    <PlaceholderScreen
      title="Mail log"
      subtitle="Every e-mail Emberlot has sent."
      coming="Sent notifications, their recipients and delivery results will be listed here."
    />
  );
}
