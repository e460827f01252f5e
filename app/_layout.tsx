import { Inter_400Regular } from '@expo-google-fonts/inter/400Regular';
import { Inter_500Medium } from '@expo-google-fonts/inter/500Medium';
import { Inter_600SemiBold } from '@expo-google-fonts/inter/600SemiBold';
import { Inter_700Bold } from '@expo-google-fonts/inter/700Bold';
import { QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { Slot } from 'expo-router';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import { Loading } from '@/components/ui/loading';
import { queryClient } from '@/hooks/api';
import { CurrentGroupProvider } from '@/hooks/use-current-group';

export default function RootLayout() {
  const [loaded, error] = useFonts({ Inter_400Regular, Inter_500Medium, Inter_600SemiBold, Inter_700Bold });
  return (
    <SafeAreaProvider>
      <QueryClientProvider client={queryClient}>
        <CurrentGroupProvider>{loaded || error ? <Slot /> : <Loading label="Starting Bandwright…" />}</CurrentGroupProvider>
      </QueryClientProvider>
    </SafeAreaProvider>
  );
}
