import { ShellLayout } from '@/components/shell/ShellLayout';

export default ShellLayout;
