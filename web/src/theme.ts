import { definePreset } from '@primeuix/themes';
import Aura from '@primeuix/themes/aura';

/** Quietpath's own look: an oxide-green primary on warm greys, amber for marks and warnings. */
export const QuietpathPreset = definePreset(Aura, {
  semantic: {
    primary: {
      50: '#eef7f5',
      100: '#d5ebe6',
      200: '#acd6cd',
      300: '#7dbbae',
      400: '#4f9c8d',
      500: '#327f71',
      600: '#26675c',
      700: '#1f534b',
      800: '#1b443e',
      900: '#173a35',
      950: '#0c2320',
    },
    colorScheme: {
      light: {
        surface: {
          0: '#ffffff',
          50: '#f8f7f4',
          100: '#efede8',
          200: '#e0ddd5',
          300: '#c9c4b9',
          400: '#a39d90',
          500: '#7f796d',
          600: '#615c52',
          700: '#49453e',
          800: '#33302b',
          900: '#221f1c',
          950: '#151311',
        },
      },
    },
  },
});
