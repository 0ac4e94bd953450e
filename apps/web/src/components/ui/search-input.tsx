import { useEffect, useRef, useState } from 'react';
import { Field, TextInput } from '@/components/ui/field';

interface SearchInputProps {
  label: string;
  value: string;
  onChange: (value: string) => void;
  placeholder?: string;
}

/** Waits for a pause in typing before searching, so the server gets one request per word, not per key. */
export function SearchInput({ label, value, onChange, placeholder }: SearchInputProps) {
  const [text, setText] = useState(value);
  const latest = useRef(onChange);

  useEffect(() => {
    latest.current = onChange;
  });

  useEffect(() => {
    setText(value);
  }, [value]);

  useEffect(() => {
    if (text === value) return;
    const timer = setTimeout(() => latest.current(text), 300);
    return () => clearTimeout(timer);
  }, [text, value]);

  return (
    <Field label={label} className="w-full max-w-md">
      {(control) => (
        <TextInput
          {...control}
          type="search"
          value={text}
          placeholder={placeholder}
          onChange={(e) => setText(e.target.value)}
          onKeyDown={(e) => {
            if (e.key === 'Enter') latest.current(text);
          }}
        />
      )}
    </Field>
  );
}
